/**
 * Gives a worker thread's memory back after its work. The pools keep a thread
 * between tasks (the interactive pool always keeps one, the run pool its warm
 * one) so the next task does not wait for a thread to load its bundle; but V8
 * collects only when a thread allocates, so a thread that elaborated a
 * 2,000,000-device network and then sits idle would keep that heap for as long
 * as the server runs. After each task a thread calls `releaseWhenIdle`: once
 * it has had no task for RELEASE_AFTER_MS it drops its caches and runs a full
 * collection, and the freed pages go back to the system.
 *
 * The collection function comes from V8's `--expose-gc` set at run time and a
 * fresh context (the way test runners reach it without a command-line flag);
 * it only ever runs in a worker thread, never on the request thread.
 */
import v8 from "node:v8";
import vm from "node:vm";

export const RELEASE_AFTER_MS = 2_000;

/**
 * How the pools' threads wait for their next task: on their event loop, not in `Atomics.wait`. Piscina's default
 * ("sync") parks an idle thread in `Atomics.wait`, which stops its event loop, so the release timer above never
 * fired: the threads kept a 2,000,000-device run's heap (about 1.4 GB) for as long as the server ran. The cost is
 * a message-port hand-off per task, microseconds against tasks of milliseconds to seconds.
 */
export const POOL_ATOMICS = "disabled" as const;

let collect: (() => void) | null = null;
let timer: ReturnType<typeof setTimeout> | null = null;

function fullCollection(): void {
  if (!collect) {
    v8.setFlagsFromString("--expose-gc");
    collect = vm.runInNewContext("gc") as () => void;
  }
  collect();
}

/** After RELEASE_AFTER_MS without another call: `drop()` (the thread's caches), then a full collection. */
export function releaseWhenIdle(drop: () => void = () => {}, afterMs = RELEASE_AFTER_MS): void {
  if (timer) clearTimeout(timer);
  timer = setTimeout(() => {
    timer = null;
    drop();
    fullCollection();
  }, afterMs);
  timer.unref?.();
}

const LOADER_FLAGS = new Set(["--import", "--require", "-r", "--loader", "--experimental-loader"]);
const TSX = /(^|[/\\])tsx([/\\]|$)/;

/**
 * The Node options for the pools' worker threads: this process's, without the TypeScript loader that
 * `npm start` and the demo run the server under (`--import tsx`). The workers run esbuild bundles
 * (.build/*.mjs, plain JavaScript); a thread that inherits the loader passes its 1.2 MB bundle through it at
 * start-up, about 0.5–1 s of CPU on the development VM against 0.2–0.3 s without (a run's first chunk on a
 * thread that had idled out paid it).
 */
export function workerExecArgv(argv: readonly string[] = process.execArgv): string[] {
  const out: string[] = [];
  for (let k = 0; k < argv.length; k++) {
    const a = argv[k];
    if (LOADER_FLAGS.has(a) && k + 1 < argv.length && TSX.test(argv[k + 1])) {
      k++;
      continue;
    }
    const eq = a.indexOf("=");
    if (eq > 0 && LOADER_FLAGS.has(a.slice(0, eq)) && TSX.test(a.slice(eq + 1))) continue;
    out.push(a);
  }
  return out;
}
