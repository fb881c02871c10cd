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
 *
 * A collection gives back only what nothing points at. A thread that still holds more than RECYCLE_ABOVE_MB
 * after it (its heap and the buffers it owns: measured after the stall workload of `npm run bench:api`, the run
 * thread that solved the 2,000,000-device run kept 250 MB of buffers) says so on MEMORY_CHANNEL, and its pool
 * replaces itself once it has nothing to do (`watchHeavyThreads`): ending a thread gives back all it had.
 */
import v8 from "node:v8";
import vm from "node:vm";
import { BroadcastChannel, threadId } from "node:worker_threads";
import { processShared } from "./process-shared";

export const RELEASE_AFTER_MS = 2_000;

/** A pool thread holding more than this after its idle collection asks to be replaced (an idle thread: ~25 MB). */
export const RECYCLE_ABOVE_MB = 64;
export const MEMORY_CHANNEL = "runnel.worker-memory";

export type PoolName = "run" | "interactive";
export interface HeavyThread {
  pool: PoolName;
  threadId: number;
  heldMb: number;
}

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

/** What this thread's isolate holds, in MB: its heap and the memory outside it that its objects own (buffers). */
function heldMb(): number {
  const m = process.memoryUsage();
  return (m.heapTotal + m.external) / 1e6;
}

let channel: BroadcastChannel | null = null;

export interface ReleaseOptions {
  afterMs?: number;
  /** The pool the thread belongs to: given, a thread still holding more than `recycleAboveMb` asks to be replaced. */
  pool?: PoolName;
  recycleAboveMb?: number;
}

/**
 * After RELEASE_AFTER_MS without another call: `drop()` (the thread's caches), then a full collection; a thread of
 * `pool` that still holds more than RECYCLE_ABOVE_MB then asks its pool to replace it.
 */
export function releaseWhenIdle(
  drop: () => void = () => {},
  { afterMs = RELEASE_AFTER_MS, pool, recycleAboveMb = RECYCLE_ABOVE_MB }: ReleaseOptions = {},
): void {
  if (timer) clearTimeout(timer);
  timer = setTimeout(() => {
    timer = null;
    drop();
    fullCollection();
    const held = heldMb();
    if (pool && held > recycleAboveMb) {
      if (!channel) {
        channel = new BroadcastChannel(MEMORY_CHANNEL);
        channel.unref();
      }
      channel.postMessage({ pool, threadId, heldMb: Math.round(held) } satisfies HeavyThread);
    }
  }, afterMs);
  timer.unref?.();
}

export interface QuietOptions {
  /** How long the server must have had no request before it collects. */
  quietMs?: number;
  /** How much the heap must have grown since the last collection (MB). */
  growthMb?: number;
  checkMs?: number;
}

/**
 * The request thread's share: once the server has had no request in flight and none for `quietMs`, and its heap
 * grew by `growthMb` since it last collected, a full collection gives the pages of a large answer back (after the
 * stall workload the request thread's heap stayed 26 MB above idle, its old space half empty). It never runs
 * while a request is in flight; a request that comes during it waits for it (tens of milliseconds).
 */
export function collectWhenQuiet(
  server: {
    on(event: "request", f: (req: unknown, res: { once(e: "close", f: () => void): unknown }) => void): unknown;
  },
  { quietMs = 10_000, growthMb = 16, checkMs = 2_500 }: QuietOptions = {},
): () => void {
  let inFlight = 0;
  let last = Date.now();
  let after = v8.getHeapStatistics().total_heap_size;
  server.on("request", (_req, res) => {
    inFlight++;
    last = Date.now();
    res.once("close", () => {
      inFlight--;
      last = Date.now();
    });
  });
  const t = setInterval(() => {
    if (inFlight > 0 || Date.now() - last < quietMs) return;
    if (v8.getHeapStatistics().total_heap_size < after + growthMb * 1e6) return;
    // compacting: a plain full collection frees the objects but leaves the old space's half-empty pages mapped
    v8.setFlagsFromString("--compact-on-every-full-gc");
    try {
      fullCollection();
    } finally {
      v8.setFlagsFromString("--no-compact-on-every-full-gc");
    }
    after = v8.getHeapStatistics().total_heap_size;
  }, checkMs);
  t.unref();
  return () => clearInterval(t);
}

/**
 * Calls `replace` when a thread of `pool` reports that it holds too much after its idle collection (on the request
 * thread; one channel per process, however many route bundles load this module). `replace` decides whether the
 * pool can be replaced now (nothing running in it) and whether the thread is still one of its own.
 */
export function watchHeavyThreads(pool: PoolName, replace: (t: HeavyThread) => void): void {
  const handlers = processShared("worker-memory.watch", () => {
    const h = new Map<PoolName, (t: HeavyThread) => void>();
    const listen = new BroadcastChannel(MEMORY_CHANNEL);
    listen.unref();
    listen.onmessage = (e) => {
      const t = (e as { data: HeavyThread }).data;
      h.get(t.pool)?.(t);
    };
    return h;
  });
  handlers.set(pool, replace);
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
