/**
 * The run supervisor: what the routes call to queue, cancel and recover runs.
 * It checks a run against the limits and the per-user queue cap, plans its
 * chunks (app/lib/run-plan.ts), stores it queued, and hands it to the run
 * queue: the local pool (app/lib/run-pool.ts, the default) or the Redis queue
 * (RUNNEL_QUEUE=redis).
 *
 * Contracts
 * - The database is the truth about runs: a queued run is queued again after
 *   a restart; a run left running by a stopped server is marked interrupted.
 * - A user has at most `queuedRunsPerUser()` runs queued; one more answers
 *   429 with the limit and how many are queued.
 */
import { db } from "@/db";
import { FINAL_RUN_STATES } from "@/db/schema";
import { retryBusy } from "./db-busy";
import { RequestError } from "./http";
import { planTextInWorker } from "./interactive";
import type { Q } from "@/db";
import { getCommit } from "./networks";
import { RUN_LIMITS } from "./results";
import { SLOW_FAULT_MS, type TestFault } from "./run-chunk";
import { ensureChunks } from "./run-exec";
import {
  cancelLocal,
  closeLocalPool,
  concurrency,
  enqueueLocal,
  resetLocalPool,
  warmLocalPool,
  whenLocalIdle,
} from "./run-pool";
import {
  finishRun,
  getRun,
  insertRun,
  interruptRunningRuns,
  openChunksOf,
  queuedRunIds,
  runsIn,
  queuedRunsOf,
  requestCancel,
  runDispatchInfo,
  type RunRow,
} from "./runs";

/** Default and largest per-run time limit. */
export const DEFAULT_TIME_LIMIT_MS = Number(process.env.RUNNEL_RUN_TIME_LIMIT_MS ?? 10 * 60_000);
export const MAX_TIME_LIMIT_MS = 60 * 60_000;

/** Runs a user may have queued at once: $RUNNEL_QUEUED_RUNS_PER_USER (default 10). */
export function queuedRunsPerUser(): number {
  const env = Number(process.env.RUNNEL_QUEUED_RUNS_PER_USER);
  return Number.isInteger(env) && env > 0 ? env : 10;
}

interface Supervisor {
  recovered: boolean;
}

const KEY = Symbol.for("runnel.runs.supervisor");
function sup(): Supervisor {
  const g = globalThis as unknown as Record<symbol, Supervisor | undefined>;
  return (g[KEY] ??= { recovered: false });
}

/**
 * Marks runs left `running` by a stopped server as interrupted and queues the
 * `queued` ones again, oldest first. Runs once per process (instrumentation's
 * register() and the first use of the supervisor both call it).
 */
export function recoverRuns(d: Q = db()): { interrupted: number; requeued: number; resumed: number } {
  const s = sup();
  if (s.recovered) return { interrupted: 0, requeued: 0, resumed: 0 };
  s.recovered = true;
  if (queueMode() === "redis") {
    // Queue workers keep solving while the app restarts: running runs resume from their open chunks.
    const running = runsIn("running", d);
    const queued = runsIn("queued", d);
    for (const r of [...running, ...queued]) ensureChunks(r.id, undefined, d);
    void import("./run-queue-redis")
      .then((q) => q.recoverRedis(running, queued))
      .catch((e: unknown) => console.error(`runnel: could not recover runs on the queue: ${(e as Error).message}`));
    return { interrupted: 0, requeued: queued.length, resumed: running.length };
  }
  const interrupted = interruptRunningRuns("the server stopped while this run was running; start it again", d);
  const queued = queuedRunIds(d);
  for (const id of queued) void enqueue(id, d);
  return { interrupted, requeued: queued.length, resumed: 0 };
}

/** Where runs execute: "local" (the in-process pool, the default) or "redis" (RUNNEL_QUEUE=redis, REDIS_URL). */
export function queueMode(): "local" | "redis" {
  return process.env.RUNNEL_QUEUE === "redis" ? "redis" : "local";
}

/** Starts the pool's first thread ahead of the first run (the server calls this at start-up). */
export async function warmPool(): Promise<void> {
  await warmLocalPool();
  if (queueMode() === "redis") await (await import("./run-queue-redis")).redisReady(2_000);
}

/** Forgets the process's recovery and queue (tests simulate a server restart with it). */
export function resetSupervisorForTests(): void {
  sup().recovered = false;
  resetLocalPool();
}

/** Resolves when no run is queued or executing in this process (tests, shutdown). */
export async function whenIdle(): Promise<void> {
  if (queueMode() === "redis") await (await import("./run-queue-redis")).whenRedisIdle();
  await whenLocalIdle();
}

/** Closes the pool and the queue's connections (tests and scripts). */
export async function closePool(): Promise<void> {
  if (queueMode() === "redis") await (await import("./run-queue-redis")).closeRedisQueue();
  await closeLocalPool();
}

export interface StartRunInput {
  commitId: string;
  actorId: string;
  timeLimitMs?: number;
  /** Test hooks honoured by the worker only when RUNNEL_TEST_FAULTS=1. */
  fault?: TestFault;
  /** The request's signal: the elaboration in the interactive pool stops when the client goes away. */
  signal?: AbortSignal;
}

/**
 * Queues a run of every analysis (sweep grid × mismatch samples) of a commit.
 * 422 when the commit has errors or the run would exceed RUN_LIMITS (with the numbers);
 * 429 when the user already has `queuedRunsPerUser()` runs queued; 503 when the Redis queue is not reachable.
 */
export async function startRun(input: StartRunInput, d: Q = db()): Promise<RunRow> {
  const redis = queueMode() === "redis" ? await import("./run-queue-redis") : null;
  if (redis) await redis.assertQueueUp();
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
  // Elaboration and planning (up to millions of devices) run in the interactive pool, off the request thread.
  const plan = await planTextInWorker(
    commit.text,
    concurrency(),
    input.signal,
    input.fault === "slow" ? SLOW_FAULT_MS : 0,
  );
  if (!plan) throw new RequestError(422, "the commit does not elaborate to a network");
  const points = plan.points;
  const values = points * plan.valuesPerPoint;
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
      `this run would store ${values.toLocaleString("en-US")} values (${points.toLocaleString("en-US")} points × ${plan.valuesPerPoint.toLocaleString("en-US")} per point); the limit is ${RUN_LIMITS.valuesPerRun.toLocaleString("en-US")} values per run.`,
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
  const cap = queuedRunsPerUser();
  const queued = queuedRunsOf(input.actorId, d);
  if (queued >= cap)
    throw new RequestError(
      429,
      `you have ${queued} run${queued === 1 ? "" : "s"} queued; the limit is ${cap} queued runs per user. Wait for one to start, or cancel one.`,
      { limit: cap, queued },
    );
  const id = await retryBusy(() =>
    insertRun(
      {
        commitId: commit.id,
        networkId: commit.networkId,
        createdBy: input.actorId,
        pointsTotal: points,
        timeLimitMs,
        layout: plan.layout ?? undefined,
        model: plan.model,
        chunks: plan.chunks,
      },
      d,
    ),
  );
  await enqueue(id, d, input.fault);
  return getRun(id, d)!;
}

/** Hands a queued run (with its chunk plan, made now when it has none) to the run queue. */
async function enqueue(runId: string, d: Q, fault?: TestFault): Promise<void> {
  if (!sup().recovered) recoverRuns(d);
  const info = runDispatchInfo(runId, d);
  if (!info || info.state !== "queued") return;
  ensureChunks(runId, undefined, d);
  const run = { id: runId, workspaceId: info.workspaceId, chunks: openChunksOf(runId, d) };
  if (queueMode() === "redis") await (await import("./run-queue-redis")).enqueueRedis(run, fault);
  else enqueueLocal(run, fault);
}

/**
 * Cancels a run. A queued run ends canceled at once; a running one is asked to
 * stop (it ends canceled after its chunks' current points, with the points done
 * kept), and is terminated if it has not stopped after STOP_GRACE_MS.
 * 409 for a run that has already ended.
 */
export async function cancelRun(runId: string, d: Q = db()): Promise<RunRow> {
  const run = getRun(runId, d);
  if (!run) throw new RequestError(404, "not found");
  if ((FINAL_RUN_STATES as readonly string[]).includes(run.state))
    throw new RequestError(409, `the run has already ended (${run.state})`, { state: run.state });
  requestCancel(runId, d);
  const where =
    queueMode() === "redis" ? await (await import("./run-queue-redis")).cancelRedis(runId) : cancelLocal(runId);
  if (where !== "live" && run.state === "queued") finishRun(runId, "canceled", "canceled before it started", d);
  return getRun(runId, d)!;
}
