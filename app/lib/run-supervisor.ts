/**
 * The run supervisor: queues runs of a commit, executes them off the request
 * thread in a piscina worker-thread pool, enforces the per-run time limit,
 * cancels, and on start marks runs that were running when the server stopped
 * as `interrupted` (queued runs are queued again).
 *
 * Contracts
 * - At most `concurrency` runs execute at once (default: one per core,
 *   $RUNNEL_RUN_THREADS overrides); the rest wait in a FIFO whose truth is the
 *   database (`state = 'queued'`), so a restart loses nothing queued.
 * - The worker (app/lib/run-worker.ts, bundled to .build/run-worker.mjs) owns a
 *   run's row while it executes: it writes progress, results and the final
 *   state. The supervisor writes a final state only when the worker could not:
 *   it threw, or was terminated after ignoring a stop request for STOP_GRACE_MS.
 * - Stop requests reach the worker through a shared Int32Array (same process)
 *   and through `runs.cancel_requested` (any process); the worker checks both.
 * - The pool and queue live on globalThis, so every route bundle shares one.
 */
import os from "node:os";
import path from "node:path";
import type Piscina from "piscina";
import { databasePath, db } from "@/db";
import { FINAL_RUN_STATES, type RunState } from "@/db/schema";
import { elaborate } from "@/src/lang/index";
import { RequestError } from "./http";
import type { Q } from "@/db";
import { getCommit } from "./networks";
import { pointCount } from "@/src/solver/index";
import { RUN_LIMITS, valuesPerPoint } from "./results";
import { STOP_CANCEL, STOP_TIME, type RunTask, type RunTaskResult } from "./run-exec";
import {
  finishRun,
  getRun,
  insertRun,
  interruptRunningRuns,
  queuedRunIds,
  requestCancel,
  runDispatchInfo,
  type RunRow,
} from "./runs";

/** Default and largest per-run time limit. */
export const DEFAULT_TIME_LIMIT_MS = Number(process.env.RUNNEL_RUN_TIME_LIMIT_MS ?? 10 * 60_000);
export const MAX_TIME_LIMIT_MS = 60 * 60_000;
/** How long a worker may take to honour a stop request before it is terminated. */
export const STOP_GRACE_MS = 5_000;

export const WORKER_FILE = () => path.join(/*turbopackIgnore: true*/ process.cwd(), ".build", "run-worker.mjs");

interface Active {
  stop: Int32Array;
  abort: AbortController;
  hardTimer: NodeJS.Timeout | null;
  /** Why the supervisor terminated the worker, if it did. */
  terminated: { state: RunState; reason: string } | null;
}

interface Supervisor {
  pool: Piscina<RunTask, RunTaskResult> | null;
  queue: string[];
  active: Map<string, Active>;
  recovered: boolean;
  idleWaiters: (() => void)[];
}

const KEY = Symbol.for("runnel.runs.supervisor");
function sup(): Supervisor {
  const g = globalThis as unknown as Record<symbol, Supervisor | undefined>;
  return (g[KEY] ??= { pool: null, queue: [], active: new Map(), recovered: false, idleWaiters: [] });
}

export function concurrency(): number {
  const env = Number(process.env.RUNNEL_RUN_THREADS);
  return Number.isInteger(env) && env > 0 ? env : Math.max(1, os.availableParallelism());
}

async function pool(minThreads = 0): Promise<Piscina<RunTask, RunTaskResult>> {
  const s = sup();
  if (!s.pool) {
    const { Piscina } = await import("piscina");
    s.pool = new Piscina<RunTask, RunTaskResult>({
      filename: WORKER_FILE(),
      maxThreads: concurrency(),
      minThreads,
      idleTimeout: 60_000,
      // The request thread comes first: a solve must never slow the pages down.
      niceIncrement: 10,
    });
  }
  return s.pool;
}

/**
 * Marks runs left `running` by a stopped server as interrupted and queues the
 * `queued` ones again, oldest first. Runs once per process (instrumentation's
 * register() and the first use of the supervisor both call it).
 */
export function recoverRuns(d: Q = db()): { interrupted: number; requeued: number } {
  const s = sup();
  if (s.recovered) return { interrupted: 0, requeued: 0 };
  s.recovered = true;
  const interrupted = interruptRunningRuns("the server stopped while this run was running; start it again", d);
  const queued = queuedRunIds(d);
  for (const id of queued) if (!s.queue.includes(id)) s.queue.push(id);
  if (queued.length) void dispatch();
  return { interrupted, requeued: queued.length };
}

/**
 * Starts one worker thread ahead of the first run (the server calls this at start-up), so the first run does
 * not wait for a thread to load the worker bundle. Threads beyond this one end after a minute idle.
 */
export async function warmPool(): Promise<void> {
  await pool(1);
}

/** Forgets the process's recovery (tests simulate a server restart with it). */
export function resetSupervisorForTests(): void {
  const s = sup();
  s.recovered = false;
  s.queue.length = 0;
}

export interface StartRunInput {
  commitId: string;
  actorId: string;
  timeLimitMs?: number;
  /** Test hooks honoured by the worker only when RUNNEL_TEST_FAULTS=1. */
  fault?: RunTask["fault"];
}

/**
 * Queues a run of every analysis (sweep grid × mismatch samples) of a commit.
 * 422 when the commit has errors or the run would exceed RUN_LIMITS (with the numbers).
 */
export function startRun(input: StartRunInput, d: Q = db()): RunRow {
  const commit = getCommit(input.commitId, d);
  if (!commit) throw new RequestError(404, "not found");
  if (!commit.ok) {
    throw new RequestError(
      422,
      `commit ${commit.id.slice(0, 12)} has ${commit.errorCount} error${commit.errorCount === 1 ? "" : "s"}: fix ${commit.errorCount === 1 ? "it" : "them"} and commit again before running`,
      {
        errors: commit.diagnostics.filter((x) => x.severity === "error").slice(0, 20),
      },
    );
  }
  const result = elaborate(commit.text);
  if (!result.network) throw new RequestError(422, "the commit does not elaborate to a network");
  const points = pointCount(result.network);
  const values = points * valuesPerPoint(result.network);
  if (points > RUN_LIMITS.pointsPerRun) {
    throw new RequestError(
      422,
      `this run has ${points.toLocaleString("en-US")} points; the limit is ${RUN_LIMITS.pointsPerRun.toLocaleString("en-US")} points per run. Use fewer sweep values or mismatch samples.`,
      {
        points,
        limit: RUN_LIMITS.pointsPerRun,
      },
    );
  }
  if (values > RUN_LIMITS.valuesPerRun) {
    throw new RequestError(
      422,
      `this run would store ${values.toLocaleString("en-US")} values (${points.toLocaleString("en-US")} points × ${valuesPerPoint(result.network).toLocaleString("en-US")} per point); the limit is ${RUN_LIMITS.valuesPerRun.toLocaleString("en-US")} values per run.`,
      {
        values,
        points,
        limit: RUN_LIMITS.valuesPerRun,
      },
    );
  }
  const timeLimitMs = input.timeLimitMs ?? DEFAULT_TIME_LIMIT_MS;
  if (!(timeLimitMs > 0 && timeLimitMs <= MAX_TIME_LIMIT_MS))
    throw new RequestError(400, `timeLimitSeconds: between 0 and ${MAX_TIME_LIMIT_MS / 1000}`);
  const id = insertRun(
    {
      commitId: commit.id,
      networkId: commit.networkId,
      createdBy: input.actorId,
      pointsTotal: points,
      timeLimitMs,
    },
    d,
  );
  if (input.fault) faults.set(id, input.fault);
  enqueue(id);
  return getRun(id, d)!;
}

const faults = new Map<string, NonNullable<RunTask["fault"]>>();

function enqueue(runId: string): void {
  const s = sup();
  if (!s.recovered) recoverRuns();
  if (!s.queue.includes(runId)) s.queue.push(runId);
  void dispatch();
}

async function dispatch(): Promise<void> {
  const s = sup();
  while (s.active.size < concurrency() && s.queue.length > 0) {
    const runId = s.queue.shift()!;
    const row = runDispatchInfo(runId);
    if (!row || row.state !== "queued") continue;
    const active: Active = {
      stop: new Int32Array(new SharedArrayBuffer(4)),
      abort: new AbortController(),
      hardTimer: null,
      terminated: null,
    };
    s.active.set(runId, active);
    // Backstop: the worker stops itself at the time limit; if a single point runs on, terminate it.
    active.hardTimer = setTimeout(
      () =>
        terminate(runId, "failed", `time limit of ${formatSeconds(row.timeLimitMs)} reached; the worker was stopped`),
      row.timeLimitMs + STOP_GRACE_MS,
    );
    const task: RunTask = {
      runId,
      dbFile: databasePath(),
      stop: active.stop.buffer as SharedArrayBuffer,
      fault: faults.get(runId),
    };
    faults.delete(runId);
    let p: Promise<RunTaskResult>;
    try {
      p = (await pool()).run(task, { signal: active.abort.signal });
    } catch (e) {
      p = Promise.reject(e);
    }
    p.then(
      () => undefined,
      (e: unknown) => {
        const t = active.terminated;
        if (t) finishRun(runId, t.state, t.reason);
        else finishRun(runId, "failed", `the run failed: ${workerMessage(e)}`);
      },
    ).finally(() => {
      if (active.hardTimer) clearTimeout(active.hardTimer);
      s.active.delete(runId);
      if (s.active.size === 0 && s.queue.length === 0) s.idleWaiters.splice(0).forEach((f) => f());
      void dispatch();
    });
  }
}

function workerMessage(e: unknown): string {
  const err = e as { code?: string; message?: string };
  if (err?.code === "ERR_MODULE_NOT_FOUND" || /Cannot find module .*run-worker/.test(err?.message ?? "")) {
    return `the run worker ${WORKER_FILE()} is missing: run \`npm run build\` (or \`node scripts/build-worker.mjs\`)`;
  }
  return (err?.message ?? String(e)).split("\n")[0];
}

function formatSeconds(ms: number): string {
  return ms % 1000 === 0 ? `${ms / 1000} s` : `${(ms / 1000).toFixed(1)} s`;
}

/** Terminates a run's worker after asking it to stop; `state`/`reason` are recorded if the worker ends without writing its own. */
function terminate(runId: string, state: RunState, reason: string): void {
  const a = sup().active.get(runId);
  if (!a) return;
  a.terminated = { state, reason };
  Atomics.store(a.stop, 0, state === "canceled" ? STOP_CANCEL : STOP_TIME);
  a.abort.abort(new Error(reason));
}

/**
 * Cancels a run. A queued run ends canceled at once; a running one is asked to
 * stop (it ends canceled after its current point, with the points done kept),
 * and is terminated if it has not stopped after STOP_GRACE_MS.
 * 409 for a run that has already ended.
 */
export function cancelRun(runId: string, d: Q = db()): RunRow {
  const run = getRun(runId, d);
  if (!run) throw new RequestError(404, "not found");
  if ((FINAL_RUN_STATES as readonly string[]).includes(run.state))
    throw new RequestError(409, `the run has already ended (${run.state})`, { state: run.state });
  const s = sup();
  requestCancel(runId, d);
  const queuedAt = s.queue.indexOf(runId);
  if (queuedAt >= 0) s.queue.splice(queuedAt, 1);
  if (run.state === "queued" && !s.active.has(runId)) {
    finishRun(runId, "canceled", "canceled before it started", d);
  } else {
    const a = s.active.get(runId);
    if (a) {
      Atomics.store(a.stop, 0, STOP_CANCEL);
      setTimeout(() => {
        if (s.active.get(runId) === a) terminate(runId, "canceled", "canceled (the worker was stopped)");
      }, STOP_GRACE_MS).unref();
    }
  }
  return getRun(runId, d)!;
}

/** Resolves when no run is queued or executing in this process (tests, shutdown). */
export function whenIdle(): Promise<void> {
  const s = sup();
  if (s.active.size === 0 && s.queue.length === 0) return Promise.resolve();
  return new Promise((resolve) => s.idleWaiters.push(resolve));
}

/** Closes the pool (tests and scripts). */
export async function closePool(): Promise<void> {
  const s = sup();
  const p = s.pool;
  s.pool = null;
  if (p) await p.destroy();
}
