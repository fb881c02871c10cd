/**
 * The local run pool (RUNNEL_QUEUE=local, the default): chunks of admitted
 * runs are solved in a piscina worker-thread pool of `concurrency()` threads
 * (every core by default), taken from the fair queue one at a time.
 *
 * Contracts
 * - At most `concurrency()` chunks execute at once; which one is next is the
 *   fair queue's choice (app/lib/fair-queue.ts).
 * - The threads (app/lib/run-worker.ts) write points and chunk figures; the
 *   pool ends a run (a `finalize` task, so the commit diff is computed off the
 *   request thread) once no chunk of it is executing and none is left, or a
 *   stop request ended it.
 * - Stop requests reach every chunk of a run through one shared Int32Array
 *   (and through `runs.cancel_requested`); a chunk that ignores one for
 *   STOP_GRACE_MS is terminated, and the pool writes the run's state.
 * - A run's time limit counts from its first chunk; a chunk stops itself at the
 *   deadline, and the pool terminates what still runs STOP_GRACE_MS later.
 */
import os from "node:os";
import path from "node:path";
import type Piscina from "piscina";
import { databasePath } from "@/db";
import type { RunState } from "@/db/schema";
import { FairQueue, type TaggedChunk } from "./fair-queue";
import {
  failChunk,
  STOP_CANCEL,
  STOP_FAILED,
  STOP_NONE,
  STOP_TIME,
  type ChunkResult,
  type RunTask,
  type RunTaskResult,
} from "./run-exec";
import type { StopKind, TestFault } from "./run-chunk";
import type { ComparisonCore } from "./review/comparison-core";
import type { Tolerance } from "./review/results-diff";
import { finishRun, runDispatchInfo } from "./runs";
import { POOL_ATOMICS, watchHeavyThreads, workerExecArgv, type HeavyThread } from "./worker-memory";

/** How long a chunk may take to honour a stop request before it is terminated. */
export const STOP_GRACE_MS = 5_000;

export const WORKER_FILE = () => path.join(/*turbopackIgnore: true*/ process.cwd(), ".build", "run-worker.mjs");

/** Threads of the local pool: $RUNNEL_RUN_THREADS, or one per core. */
export function concurrency(): number {
  const env = Number(process.env.RUNNEL_RUN_THREADS);
  return Number.isInteger(env) && env > 0 ? env : Math.max(1, os.availableParallelism());
}

/** Runs of one workspace admitted at once: $RUNNEL_RUNS_PER_WORKSPACE (default 4). */
export function runsPerWorkspace(): number {
  const env = Number(process.env.RUNNEL_RUNS_PER_WORKSPACE);
  return Number.isInteger(env) && env > 0 ? env : 4;
}

interface LiveRun {
  id: string;
  stop: Int32Array;
  /** Chunks executing, with the controller that terminates each. */
  active: Map<number, AbortController>;
  /** Chunks admitted and not handed out yet. */
  pending: Set<number>;
  /** Chunks handed out so far (the first one starts the time limit). */
  dispatched: number;
  hardTimer: NodeJS.Timeout | null;
  /** The state the pool records when it had to terminate chunks. */
  terminated: { state: RunState; reason: string } | null;
  finalizing: boolean;
}

interface Pool {
  piscina: Piscina<RunTask, ChunkResult | RunTaskResult | ComparisonCore | null> | null;
  queue: FairQueue;
  live: Map<string, LiveRun>;
  executing: number;
  /** Tasks of any kind handed to piscina and not ended (chunks, finalizing, comparisons). */
  inPool: number;
  faults: Map<string, TestFault>;
  idleWaiters: (() => void)[];
}

const KEY = Symbol.for("runnel.runs.pool");
function state(): Pool {
  const g = globalThis as unknown as Record<symbol, Pool | undefined>;
  return (g[KEY] ??= {
    piscina: null,
    queue: new FairQueue(runsPerWorkspace),
    live: new Map(),
    executing: 0,
    inPool: 0,
    faults: new Map(),
    idleWaiters: [],
  });
}

async function piscina(minThreads = 0): Promise<Piscina<RunTask, ChunkResult | RunTaskResult | ComparisonCore | null>> {
  const s = state();
  if (!s.piscina) {
    const { Piscina } = await import("piscina");
    watchHeavyThreads("run", replaceHeavyPool);
    // `??=`: a caller that awaited the import beside this one may have made the pool already
    s.piscina ??= new Piscina<RunTask, ChunkResult | RunTaskResult | ComparisonCore | null>({
      filename: WORKER_FILE(),
      execArgv: workerExecArgv(),
      maxThreads: concurrency(),
      minThreads,
      atomics: POOL_ATOMICS,
      idleTimeout: 60_000,
      // The request thread comes first: a solve must never slow the pages down.
      niceIncrement: 10,
    });
  }
  return s.piscina;
}

/**
 * A thread that still holds a large run's memory once idle (app/lib/worker-memory.ts) is ended by replacing the
 * whole pool, when nothing runs in it: the old pool's threads end (all they held goes back to the system), a new
 * one is warmed. While tasks run, the thread reports again after its next task.
 */
function replaceHeavyPool(t: HeavyThread): void {
  const s = state();
  const old = s.piscina;
  if (!old || s.inPool > 0 || s.queue.size > 0 || !old.threads.some((w) => w.threadId === t.threadId)) return;
  s.piscina = null;
  void old.destroy();
  void piscina(1);
}

/** One task in the pool, counted while it is there (a pool with tasks in it is never replaced). */
async function inPool(
  task: RunTask,
  signal?: AbortSignal,
): Promise<ChunkResult | RunTaskResult | ComparisonCore | null> {
  const s = state();
  s.inPool++;
  try {
    return await (await piscina()).run(task, signal ? { signal } : {});
  } finally {
    s.inPool--;
  }
}

/** The thread ids of the pool's threads now (none before it starts). */
export function localPoolThreadIds(): number[] {
  return (state().piscina?.threads ?? []).map((w) => w.threadId);
}

/** Starts one thread ahead of the first run, so the first chunk does not wait for a thread to load the bundle. */
export async function warmLocalPool(): Promise<void> {
  await piscina(1);
}

/** Queues a run whose chunks are stored; `chunks` are the indices still to solve. */
export function enqueueLocal(run: { id: string; workspaceId: string; chunks: number[] }, fault?: TestFault): void {
  const s = state();
  if (fault) s.faults.set(run.id, fault);
  admitted(s.queue.add(run));
  void dispatch();
}

function admitted(chunks: TaggedChunk[]): void {
  for (const c of chunks) liveRun(c.runId).pending.add(c.chunk);
}

function liveRun(id: string): LiveRun {
  const s = state();
  let r = s.live.get(id);
  if (!r) {
    r = {
      id,
      stop: new Int32Array(new SharedArrayBuffer(4)),
      active: new Map(),
      pending: new Set(),
      dispatched: 0,
      hardTimer: null,
      terminated: null,
      finalizing: false,
    };
    s.live.set(id, r);
  }
  return r;
}

async function dispatch(): Promise<void> {
  const s = state();
  while (s.executing < concurrency()) {
    const c = s.queue.next();
    if (!c) break;
    const run = liveRun(c.runId);
    run.pending.delete(c.chunk);
    if (Atomics.load(run.stop, 0) !== STOP_NONE) {
      settle(run);
      continue;
    }
    if (run.dispatched++ === 0) startClock(run);
    const abort = new AbortController();
    run.active.set(c.chunk, abort);
    s.executing++;
    const task: RunTask = {
      kind: "chunk",
      runId: run.id,
      chunk: c.chunk,
      dbFile: databasePath(),
      stop: run.stop.buffer as SharedArrayBuffer,
      fault: s.faults.get(run.id),
    };
    let p: Promise<ChunkResult>;
    try {
      p = inPool(task, abort.signal) as Promise<ChunkResult>;
    } catch (e) {
      p = Promise.reject(e);
    }
    p.then(
      (r) => chunkEnded(run, c.chunk, r),
      (e: unknown) => {
        if (!run.terminated) chunkEnded(run, c.chunk, failChunk(run.id, c.chunk, workerMessage(e)));
      },
    ).finally(() => {
      s.executing--;
      run.active.delete(c.chunk);
      settle(run);
      void dispatch();
    });
  }
}

/** Arms the backstop: chunks still executing STOP_GRACE_MS after the deadline are terminated. */
function startClock(run: LiveRun): void {
  const info = runDispatchInfo(run.id);
  if (!info) return;
  run.hardTimer = setTimeout(() => {
    if (run.active.size > 0)
      terminate(run, "failed", `time limit of ${formatSeconds(info.timeLimitMs)} reached; the worker was stopped`);
    else stopRun(run.id, STOP_TIME);
  }, info.timeLimitMs + STOP_GRACE_MS);
}

function chunkEnded(run: LiveRun, _chunk: number, r: ChunkResult): void {
  if (r.outcome === "failed") stopRun(run.id, STOP_FAILED);
  else if (r.outcome === "stopped") stopRun(run.id, r.stopped);
  else if (r.outcome === "skipped") stopRun(run.id, STOP_CANCEL);
}

/** Asks every chunk of a live run to stop and drops its chunks not handed out; false for a run not here. */
export function stopRun(runId: string, kind: StopKind): boolean {
  const s = state();
  const run = s.live.get(runId);
  if (!run) return false;
  if (Atomics.load(run.stop, 0) === STOP_NONE) Atomics.store(run.stop, 0, kind);
  s.queue.drop(runId);
  run.pending.clear();
  settle(run);
  return true;
}

/** Cancels a run in the pool: "waiting" (never admitted: end it here), "live" (stopping), or "unknown". */
export function cancelLocal(runId: string): "waiting" | "live" | "unknown" {
  const s = state();
  if (s.queue.isWaiting(runId)) {
    s.queue.drop(runId);
    return "waiting";
  }
  const run = s.live.get(runId);
  if (!run) return "unknown";
  stopRun(runId, STOP_CANCEL);
  setTimeout(() => {
    if (s.live.get(runId) === run && run.active.size > 0)
      terminate(run, "canceled", "canceled (the worker was stopped)");
  }, STOP_GRACE_MS).unref();
  return "live";
}

/** Terminates the run's executing chunks; `state`/`reason` are recorded as the run's end. */
function terminate(run: LiveRun, st: RunState, reason: string): void {
  run.terminated ??= { state: st, reason };
  stopRun(run.id, st === "canceled" ? STOP_CANCEL : STOP_TIME);
  for (const a of run.active.values()) a.abort(new Error(reason));
}

/** Ends the run once nothing of it executes and nothing is left to hand out. */
function settle(run: LiveRun): void {
  if (run.finalizing || run.active.size > 0 || run.pending.size > 0) return;
  if (state().queue.isWaiting(run.id)) return;
  run.finalizing = true;
  if (run.hardTimer) clearTimeout(run.hardTimer);
  const s = state();
  s.executing++;
  void (async () => {
    try {
      const r = await finalizeInPool(run.id, run.terminated ?? undefined);
      // Every chunk was handed out and ended, yet the run is not complete: never leave it open.
      if (r === null) finishRun(run.id, "failed", "the run ended with points missing (a chunk did not finish)");
    } catch (e) {
      finishRun(
        run.id,
        run.terminated?.state ?? "failed",
        run.terminated?.reason ?? `the run failed: ${workerMessage(e)}`,
      );
    } finally {
      s.executing--;
      s.live.delete(run.id);
      s.faults.delete(run.id);
      admitted(s.queue.ended(run.id));
      if (s.live.size === 0 && s.queue.size === 0) s.idleWaiters.splice(0).forEach((f) => f());
      void dispatch();
    }
  })();
}

/**
 * Ends a run from its chunks in a pool thread (finalizeRun: merged figures, state, commit diff); null when
 * incomplete. A run that ends done has its comparison with the parent commit's run computed next, at the pool's
 * low priority, so the compare page's first visit finds it ready (app/lib/review/compare-data.ts).
 */
export async function finalizeInPool(
  runId: string,
  forced?: { state: RunState; reason: string },
): Promise<RunTaskResult | null> {
  const task: RunTask = { kind: "finalize", runId, dbFile: databasePath() };
  if (forced) task.forced = forced;
  const r = (await inPool(task)) as RunTaskResult | null;
  if (r?.state === "done" && process.env.RUNNEL_PRECOMPUTE_COMPARISONS !== "0")
    void import("./review/compare-data")
      .then((m) => m.precomputeForRun(runId))
      .catch((e: Error) => console.error(`run ${runId}: its comparison could not be computed ahead: ${e.message}`));
  return r;
}

/** The comparison of two done runs in a run pool thread (niced: pages and runs' chunks keep their pace). */
export async function compareInRunPool(
  fromRunId: string,
  toRunId: string,
  tolerance: Tolerance,
): Promise<ComparisonCore | null> {
  const task: RunTask = { kind: "compare", fromRunId, toRunId, tolerance, dbFile: databasePath() };
  return (await inPool(task)) as ComparisonCore | null;
}

export function workerMessage(e: unknown): string {
  const err = e as { code?: string; message?: string };
  if (err?.code === "ERR_MODULE_NOT_FOUND" || /Cannot find module .*run-worker/.test(err?.message ?? "")) {
    return `the run worker ${WORKER_FILE()} is missing: run \`npm run build\` (or \`node scripts/build-worker.mjs\`)`;
  }
  return (err?.message ?? String(e)).split("\n")[0];
}

export function formatSeconds(ms: number): string {
  return ms % 1000 === 0 ? `${ms / 1000} s` : `${(ms / 1000).toFixed(1)} s`;
}

/** Resolves when no run is queued or executing in this process (tests, shutdown). */
export function whenLocalIdle(): Promise<void> {
  const s = state();
  if (s.live.size === 0 && s.queue.size === 0) return Promise.resolve();
  return new Promise((resolve) => s.idleWaiters.push(resolve));
}

/** Forgets the queue (tests simulate a server restart with it). */
export function resetLocalPool(): void {
  const s = state();
  s.queue = new FairQueue(runsPerWorkspace);
  s.live.clear();
}

/** Closes the pool (tests and scripts). */
export async function closeLocalPool(): Promise<void> {
  const s = state();
  const p = s.piscina;
  s.piscina = null;
  if (p) await p.destroy();
}
