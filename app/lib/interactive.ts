/**
 * The interactive pool: worker threads for heavy work a request waits on —
 * elaborating a text for a commit or a run start, parsing a measurement CSV —
 * so the request thread keeps serving everyone else meanwhile. It is separate
 * from the run pool (app/lib/runs.ts): a long run queue never delays a commit.
 *
 * Contract
 * - At most `interactiveThreads()` tasks run at once ($RUNNEL_INTERACTIVE_THREADS,
 *   default: one per core but one); the rest wait in piscina's queue.
 * - A task has a time limit ($RUNNEL_INTERACTIVE_TIME_LIMIT_MS, default 60 s)
 *   and is cancelled when the request's signal aborts (the client went away):
 *   piscina terminates the thread that runs it. The time limit answers 422 with
 *   what took too long; a client that went away gets nothing.
 * - One thread stays (started with the server, `warmInteractivePool`), so a
 *   commit never waits for a thread to load the worker bundle; threads beyond
 *   it end after IDLE_MS without work, so their memory goes back to the system.
 *   The kept thread, when it still holds a large task's memory once idle, is
 *   replaced with its pool (`replaceHeavyPool`).
 * - The pool lives on globalThis, so every route bundle shares one.
 */
import os from "node:os";
import path from "node:path";
import type Piscina from "piscina";
import { RequestError } from "./http";
import { databasePath } from "@/db";
import type {
  ComparisonCore,
  InteractiveResult,
  InteractiveTask,
  MeasurementFields,
  StoreCsvResult,
} from "./interactive-worker";
import type { Tolerance } from "./review/results-diff";
import type { ParseResult } from "./review/measurements";
import type { PlanText, TextCheck } from "./text-check";
import type { SeekSpec, SeekView, SensitivityView } from "./sensitivity-view";
import type { StructureView } from "./structure";
import { processShared } from "./process-shared";
import { POOL_ATOMICS, watchHeavyThreads, workerExecArgv, type HeavyThread } from "./worker-memory";

export const INTERACTIVE_WORKER_FILE = () =>
  path.join(/*turbopackIgnore: true*/ process.cwd(), ".build", "interactive-worker.mjs");
const IDLE_MS = 5_000;

export function interactiveThreads(): number {
  const env = Number(process.env.RUNNEL_INTERACTIVE_THREADS);
  return Number.isInteger(env) && env > 0 ? env : Math.max(1, os.availableParallelism() - 1);
}

export function interactiveTimeLimitMs(): number {
  const env = Number(process.env.RUNNEL_INTERACTIVE_TIME_LIMIT_MS);
  return Number.isFinite(env) && env > 0 ? env : 60_000;
}

const KEY = Symbol.for("runnel.interactive.pool");
type Pool = Piscina<
  InteractiveTask,
  TextCheck | PlanText | ParseResult | StoreCsvResult | ComparisonCore | SensitivityView | SeekView | null
>;

async function pool(): Promise<Pool> {
  return poolWith(0);
}

/** Starts the pool's first thread and keeps it (the server calls this at start-up). */
export async function warmInteractivePool(): Promise<void> {
  const p = await poolWith(1);
  // A no-op task makes the thread load the bundle now rather than at the first request.
  await p.run({ kind: "check", text: "" });
}

async function poolWith(minThreads: number): Promise<Pool> {
  const g = globalThis as unknown as Record<symbol, Pool | undefined>;
  if (!g[KEY]) {
    const { Piscina } = await import("piscina");
    watchHeavyThreads("interactive", replaceHeavyPool);
    // `??=`: a caller that awaited the import beside this one may have made the pool already
    g[KEY] ??= new Piscina<
      InteractiveTask,
      TextCheck | PlanText | ParseResult | StoreCsvResult | ComparisonCore | SensitivityView | SeekView | null
    >({
      filename: INTERACTIVE_WORKER_FILE(),
      execArgv: workerExecArgv(),
      maxThreads: interactiveThreads(),
      minThreads,
      atomics: POOL_ATOMICS,
      idleTimeout: IDLE_MS,
    });
  }
  return g[KEY];
}

/** Tasks handed to the pool and not ended (one count per process, however many route bundles load this module). */
const inFlight = processShared("interactive.busy", () => ({ n: 0 }));
function busy(delta = 0): number {
  return (inFlight.n += delta);
}

/**
 * A thread that still holds much after its idle collection (app/lib/worker-memory.ts: a 2,000,000-device
 * elaboration, a million-row CSV) ends with its pool, replaced by a new warm one, when no task is in it.
 */
function replaceHeavyPool(t: HeavyThread): void {
  const g = globalThis as unknown as Record<symbol, Pool | undefined>;
  const old = g[KEY];
  if (!old || busy() > 0 || !old.threads.some((w) => w.threadId === t.threadId)) return;
  g[KEY] = undefined;
  void old.destroy();
  void warmInteractivePool().catch(() => {});
}

const WHAT: Record<InteractiveTask["kind"], string> = {
  check: "checking the network text",
  plan: "planning the run",
  csv: "reading the measurement CSV",
  "store-csv": "reading and storing the measurement CSV",
  compare: "comparing the two runs",
  sensitivity: "computing the sensitivities",
  seek: "seeking the param's value",
  structure: "reading the network's structure",
};

/** Runs `task` in the interactive pool, under its time limit, cancelled when `signal` aborts. */
export async function runInteractive<T extends InteractiveTask>(
  task: T,
  signal?: AbortSignal,
): Promise<InteractiveResult<T>> {
  const limit = interactiveTimeLimitMs();
  const timeout = AbortSignal.timeout(limit);
  const both = signal ? AbortSignal.any([signal, timeout]) : timeout;
  busy(1);
  try {
    return (await (await pool()).run(task, { signal: both })) as InteractiveResult<T>;
  } catch (e) {
    if (timeout.aborted)
      throw new RequestError(
        422,
        `${WHAT[task.kind]} took longer than ${Math.round(limit / 1000)} s; nothing was stored`,
      );
    if (signal?.aborted) throw new RequestError(400, "the request was cancelled by the client");
    throw e;
  } finally {
    busy(-1);
  }
}

/** The checks of a network text (diagnostics, run size), computed in the interactive pool. */
export function checkTextInWorker(text: string, signal?: AbortSignal): Promise<TextCheck> {
  return runInteractive({ kind: "check", text }, signal);
}

/** The plan of a run of `text` (null when it does not elaborate), made in the interactive pool. */
export function planTextInWorker(
  text: string,
  workers: number,
  signal?: AbortSignal,
  extraPointMs = 0,
): Promise<PlanText | null> {
  return runInteractive({ kind: "plan", text, workers, extraPointMs }, signal);
}

/** A measurement CSV parsed in the interactive pool. */
export function parseCsvInWorker(bytes: Uint8Array, signal?: AbortSignal): Promise<ParseResult> {
  return runInteractive({ kind: "csv", bytes }, signal);
}

/**
 * A measurement CSV parsed and, when every row reads, stored by a pool thread through its own connection (the
 * request thread neither packs nor writes its values). The fields are already authorised.
 */
export function storeCsvInWorker(
  bytes: Uint8Array,
  measurement: MeasurementFields,
  signal?: AbortSignal,
): Promise<StoreCsvResult> {
  return runInteractive({ kind: "store-csv", bytes, dbFile: databasePath(), measurement }, signal);
}

/** Two done runs compared by a pool thread (it reads them through its own connection); null when one has no results. */
export function compareInWorker(
  fromRunId: string,
  toRunId: string,
  tolerance: Tolerance,
  signal?: AbortSignal,
): Promise<ComparisonCore | null> {
  return runInteractive({ kind: "compare", dbFile: databasePath(), fromRunId, toRunId, tolerance }, signal);
}

/** The Sensitivity view of a network text (app/lib/sensitivity-view.ts), computed in the interactive pool. */
export function sensitivityInWorker(text: string, signal?: AbortSignal): Promise<SensitivityView> {
  return runInteractive({ kind: "sensitivity", text }, signal);
}

/** Goal-seeks of a network text (the file's `seek` statements, or `spec`), computed in the interactive pool. */
export function seekInWorker(text: string, spec?: SeekSpec, signal?: AbortSignal): Promise<SeekView> {
  return runInteractive({ kind: "seek", text, ...(spec ? { spec } : {}) }, signal);
}

/**
 * A commit's structure (app/lib/structure.ts): its devices and nodes matching `query`, and the graph of a small
 * network; null when the text does not elaborate. The pool thread keeps the last few small networks it elaborated.
 */
export function structureInWorker(
  commitId: string,
  text: string,
  query: string,
  signal?: AbortSignal,
): Promise<StructureView | null> {
  return runInteractive({ kind: "structure", commitId, text, query }, signal);
}

/** The thread ids of the pool's threads now (none before it starts). */
export function interactiveThreadIds(): number[] {
  const g = globalThis as unknown as Record<symbol, Pool | undefined>;
  return (g[KEY]?.threads ?? []).map((w) => w.threadId);
}

/** Ends the pool's threads (tests and scripts that must exit). */
export async function closeInteractivePool(): Promise<void> {
  const g = globalThis as unknown as Record<symbol, Pool | undefined>;
  const p = g[KEY];
  g[KEY] = undefined;
  await p?.destroy();
}
