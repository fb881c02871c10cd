/**
 * The chunk processor of a queue worker: BullMQ's sandboxed processor
 * (`useWorkerThreads`, bundled to .build/chunk-processor.mjs), so a long
 * synchronous solve never blocks the worker process's lock renewal. For each
 * chunk job it claims the chunk from the app, hands it to its solver thread
 * (worker/solver.ts, one per processor thread, kept across jobs) and posts the
 * batches the solver sends, one at a time, then the chunk's end.
 *
 * Stops: the app's answer to any post (cancel, time limit, a failed chunk) and
 * the job's abort signal (a queue event from the app, or the worker shutting
 * down) set the solver's stop flag; the solver stops after its current point.
 * A chunk the app refuses to hand out (409: the run ended or is stopping) is
 * skipped. A post the app cannot take (no answer for a minute) fails the job,
 * and BullMQ hands it out again.
 */
import { Worker } from "node:worker_threads";
import type { SandboxedJob } from "bullmq";
import { STOP_CANCEL, STOP_NONE, type StopKind, type TestFault } from "@/app/lib/run-chunk";
import type { ChunkStats } from "@/app/lib/run-stats";
import { AppClient, AppRefusal } from "./app-client";
import type { SolverMessage, SolveTask } from "./solver";

export interface ChunkJob {
  runId: string;
  chunk: number;
  start: number;
  end: number;
  gen: number;
}

const shared = new Int32Array(new SharedArrayBuffer(8));
let solver: Worker | null = null;
let onMessage: ((m: SolverMessage) => void) | null = null;
let onExit: ((e: Error) => void) | null = null;
const texts = new Map<string, string>();

function solverThread(): Worker {
  if (solver) return solver;
  const w = new Worker(new URL("./chunk-solver.mjs", import.meta.url), { workerData: { shared: shared.buffer } });
  w.on("message", (m: SolverMessage) => onMessage?.(m));
  const died = (e: Error) => {
    solver = null;
    onExit?.(e);
  };
  w.on("error", died);
  w.on("exit", (code) => died(new Error(`the solver thread exited (code ${code})`)));
  solver = w;
  return w;
}

// Start the solver thread with the processor's thread, so the first chunk does not wait for it to load.
solverThread();

function client(): AppClient {
  const url = process.env.RUNNEL_APP_URL;
  const token = process.env.RUNNEL_WORKER_TOKEN;
  if (!url || !token) throw new Error("RUNNEL_APP_URL and RUNNEL_WORKER_TOKEN must be set");
  return new AppClient(url, token);
}

export default async function processChunk(
  job: SandboxedJob<ChunkJob>,
  _token?: string,
  signal?: AbortSignal,
): Promise<{ skipped?: string; points?: number; outcome?: string }> {
  const app = client();
  const { runId, chunk } = job.data;
  let claim;
  try {
    claim = await app.claim(runId, chunk);
  } catch (e) {
    if (e instanceof AppRefusal && (e.status === 409 || e.status === 404)) return { skipped: e.message };
    throw e;
  }
  const attempt = claim.attempt;
  Atomics.store(shared, 0, STOP_NONE);
  Atomics.store(shared, 1, 0);
  const stop = (kind: StopKind) => {
    if (kind !== STOP_NONE && Atomics.load(shared, 0) === STOP_NONE) Atomics.store(shared, 0, kind);
    Atomics.notify(shared, 1);
  };
  const abort = () => stop(STOP_CANCEL);
  signal?.addEventListener("abort", abort);
  const fault: TestFault | undefined = process.env.RUNNEL_TEST_FAULTS === "1" ? claim.fault : undefined;
  let posted = 0;
  let posts: Promise<void> = Promise.resolve();
  let postError: Error | null = null;
  try {
    const end = await new Promise<Extract<SolverMessage, { kind: "end" | "error" }>>((resolve, reject) => {
      onExit = reject;
      onMessage = (m) => {
        if (m.kind === "need-text") {
          app
            .commitText(m.commitId)
            .then((text) => {
              texts.set(m.commitId, text);
              solverThread().postMessage(task(text));
            })
            .catch(reject);
        } else if (m.kind === "batch") {
          posts = posts.then(async () => {
            if (postError) return;
            try {
              const r = await app.points(runId, chunk, attempt, m.bytes);
              posted += r.stored;
              stop(r.stop);
            } catch (e) {
              postError = e as Error;
              stop(STOP_CANCEL);
            } finally {
              Atomics.sub(shared, 1, 1);
              Atomics.notify(shared, 1);
            }
          });
        } else resolve(m);
      };
      const task = (text: string | null): SolveTask => ({
        commitId: claim.commitId,
        text,
        start: claim.start,
        end: claim.end,
        deadline: claim.deadline,
        fault,
      });
      solverThread().postMessage(task(texts.get(claim.commitId) ?? null));
    });
    await posts;
    const refused = postError as Error | null;
    if (refused) {
      // The app no longer takes this chunk from us (handed out again, or the run ended): nothing more to do.
      if (refused instanceof AppRefusal && refused.status === 409) return { skipped: refused.message };
      throw refused;
    }
    if (end.kind === "error") {
      await app.end(runId, chunk, { outcome: "failed", attempt, message: end.message }).catch(() => undefined);
      return { outcome: "failed" };
    }
    const outcome = end.stopped === STOP_NONE ? "done" : "stopped";
    await app
      .end(runId, chunk, {
        outcome,
        attempt,
        stats: end.stats as ChunkStats,
        flags: Buffer.from(end.flags.buffer, end.flags.byteOffset, end.flags.byteLength).toString("base64"),
      })
      .catch((e: unknown) => {
        if (!(e instanceof AppRefusal && e.status === 409)) throw e;
      });
    return { points: posted, outcome };
  } finally {
    signal?.removeEventListener("abort", abort);
    onMessage = null;
    onExit = null;
  }
}
