/**
 * The solver thread of a queue worker's chunk processor (bundled to
 * .build/chunk-solver.mjs): solves one chunk at a time, synchronously, and
 * sends each batch of points to the processor as a binary frame to post
 * (transferred, not copied), so the processor's thread stays free for HTTP
 * and for the abort signal.
 *
 * Shared flags (workerData.shared, Int32Array): [0] the stop request (STOP_*,
 * set by the processor from the app's answers or the abort signal, read before
 * every point); [1] batches sent and not yet posted: at MAX_OUTSTANDING the
 * solver waits, so memory stays bounded however slow the posts.
 */
import { parentPort, workerData } from "node:worker_threads";
import { elaborate, type Network } from "@/src/lang/index";
import { countsOf, layoutOf, type RunLayout } from "@/app/lib/results";
import { solveChunk, STOP_NONE, STOP_TIME, type StopKind, type TestFault } from "@/app/lib/run-chunk";
import { encodeBatch } from "@/app/lib/run-wire";

export interface SolveTask {
  commitId: string;
  /** The commit's text when this thread has not seen the commit yet. */
  text: string | null;
  start: number;
  end: number;
  deadline: number;
  fault?: TestFault;
}

export type SolverMessage =
  | { kind: "need-text"; commitId: string }
  | { kind: "batch"; bytes: Uint8Array }
  | { kind: "end"; stopped: StopKind; stats: unknown; flags: Uint8Array }
  | { kind: "error"; message: string };

export const MAX_OUTSTANDING = 2;

const shared = new Int32Array((workerData as { shared: SharedArrayBuffer }).shared);
const cache = new Map<string, { net: Network; layout: RunLayout } | { error: string }>();

function networkOf(commitId: string, text: string | null) {
  let hit = cache.get(commitId);
  if (!hit && text !== null) {
    const r = elaborate(text);
    hit = r.network
      ? { net: r.network, layout: layoutOf(r.network) }
      : { error: `the commit has errors: ${r.diagnostics.find((x) => x.severity === "error")?.message ?? "?"}` };
    cache.set(commitId, hit);
    while (cache.size > 2) cache.delete(cache.keys().next().value as string);
  }
  return hit ?? null;
}

function send(m: SolverMessage, transfer: ArrayBuffer[] = []): void {
  parentPort!.postMessage(m, transfer);
}

parentPort!.on("message", (task: SolveTask) => {
  try {
    const found = networkOf(task.commitId, task.text);
    if (!found) return send({ kind: "need-text", commitId: task.commitId });
    if ("error" in found) return send({ kind: "error", message: found.error });
    const { net, layout } = found;
    const counts = countsOf(layout);
    const outcome = solveChunk(net, layout, task, {
      fault: task.fault,
      stop: () => {
        const s = Atomics.load(shared, 0) as StopKind;
        if (s !== STOP_NONE) return s;
        return Date.now() > task.deadline ? STOP_TIME : STOP_NONE;
      },
      onBatch: (points) => {
        for (;;) {
          const n = Atomics.load(shared, 1);
          if (n < MAX_OUTSTANDING || Atomics.load(shared, 0) !== STOP_NONE) break;
          Atomics.wait(shared, 1, n, 1_000);
        }
        Atomics.add(shared, 1, 1);
        const bytes = encodeBatch(points, counts);
        send({ kind: "batch", bytes }, [bytes.buffer]);
      },
    });
    send({ kind: "end", stopped: outcome.stopped, stats: outcome.stats, flags: outcome.flags });
  } catch (e) {
    send({ kind: "error", message: ((e as Error).message ?? String(e)).split("\n")[0] });
  }
});
