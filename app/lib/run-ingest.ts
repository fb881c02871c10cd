/**
 * The app's side of queue workers (RUNNEL_QUEUE=redis): handing a chunk out
 * under a worker's token, storing the points it posts, and recording its end.
 * Workers never open the database: everything they solve comes back here.
 *
 * Contracts
 * - A worker sees only runs of the workspace its token serves (any, for an
 *   operator token); other runs are 404.
 * - A claim hands a chunk out under the worker's token at a new attempt
 *   number; posts for that chunk are accepted only with that token and that
 *   attempt (a chunk handed out again after its worker was lost refuses the
 *   old worker's late posts), only while the run is running, and only for
 *   points inside the chunk with the run's layout (run-wire.ts). Anything else
 *   is refused with its reason and logged.
 * - Storing is idempotent by (run, point): a chunk solved twice stores every
 *   point once.
 * - Every answer carries the run's stop request (cancel, time limit, a failed
 *   chunk), which the worker obeys after its current point.
 */
import { and, count, eq, gte, lt } from "drizzle-orm";
import { db, type Q } from "@/db";
import { commits, runChunks, runPoints, runs } from "@/db/schema";
import { RequestError } from "./http";
import type { PointCounts } from "./point-codec";
import { countsOf, runLayoutHead } from "./results";
import { STOP_CANCEL, STOP_FAILED, STOP_NONE, STOP_TIME, type StopKind, type TestFault } from "./run-chunk";
import { claimRun, storePoints, writeBusy } from "./run-exec";
import { BatchError, decodeBatch, type ChunkEnd } from "./run-wire";
import type { WorkerIdentity } from "./worker-tokens";

export interface ClaimAnswer {
  attempt: number;
  commitId: string;
  start: number;
  end: number;
  /** Mismatch samples per grid point (1 without mismatch): a point's sample is point mod samples. */
  samples: number;
  counts: PointCounts;
  /** When the run's time limit ends (ms since the epoch). */
  deadline: number;
  /** Its virtual time in the fair queue (the app's clock moves to it). */
  tag: number;
  fault?: TestFault;
}

function refuse(
  worker: WorkerIdentity,
  runId: string,
  chunk: number,
  status: 404 | 409 | 413 | 422,
  why: string,
): never {
  console.warn(`runnel: refused worker ${worker.id} on run ${runId} chunk ${chunk}: ${why}`);
  throw new RequestError(status, why);
}

function runFor(worker: WorkerIdentity, runId: string, chunk: number, d: Q) {
  const run = d.select().from(runs).where(eq(runs.id, runId)).get();
  if (!run || (worker.workspaceId !== null && run.workspaceId !== worker.workspaceId))
    refuse(worker, runId, chunk, 404, "no such run for this worker token");
  return run;
}

/** The run's stop request, from the database (any process may have made it). */
export function stopOf(run: typeof runs.$inferSelect, d: Q = db(), now = Date.now()): StopKind {
  if (run.cancelRequested) return STOP_CANCEL;
  if (run.startedAt && now > run.startedAt.getTime() + run.timeLimitMs) return STOP_TIME;
  const failed = d
    .select({ n: count() })
    .from(runChunks)
    .where(and(eq(runChunks.runId, run.id), eq(runChunks.state, "failed")))
    .get();
  return failed && failed.n > 0 ? STOP_FAILED : STOP_NONE;
}

/**
 * Hands chunk `chunk` of a run out under `worker` (claiming the run if it is still queued). 409 when the run is not
 * running or has a stop request, or the chunk is already done.
 */
export function claimChunk(
  worker: WorkerIdentity,
  runId: string,
  chunk: number,
  fault: TestFault | undefined,
  d: Q = db(),
): ClaimAnswer {
  runFor(worker, runId, chunk, d);
  claimRun(runId, Date.now(), d);
  const run = runFor(worker, runId, chunk, d);
  if (run.state !== "running") refuse(worker, runId, chunk, 409, `the run is ${run.state}`);
  const stop = stopOf(run, d);
  if (stop !== STOP_NONE) refuse(worker, runId, chunk, 409, `the run is stopping (${STOP_NAMES[stop]})`);
  const c = chunkRow(worker, runId, chunk, d);
  if (c.state === "done" || c.state === "failed") refuse(worker, runId, chunk, 409, `the chunk is already ${c.state}`);
  const attempt = c.attempts + 1;
  writeBusy(() =>
    d
      .update(runChunks)
      .set({ state: "running", attempts: attempt, workerTokenId: worker.id, claimedAt: new Date() })
      .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
      .run(),
  );
  const layout = runLayoutHead(runId, d);
  if (!layout) refuse(worker, runId, chunk, 409, "the run has no layout yet");
  return {
    attempt,
    commitId: run.commitId,
    start: c.start,
    end: c.end,
    samples: layout.mismatch?.runs ?? 1,
    counts: countsOf(layout),
    deadline: (run.startedAt?.getTime() ?? Date.now()) + run.timeLimitMs,
    tag: c.tag,
    ...(fault ? { fault } : {}),
  };
}

const STOP_NAMES: Record<StopKind, string> = {
  [STOP_NONE]: "none",
  [STOP_CANCEL]: "canceled",
  [STOP_TIME]: "time limit reached",
  [STOP_FAILED]: "another chunk failed",
};

/** The chunk's row, or a refusal (404). */
function chunkRow(worker: WorkerIdentity, runId: string, chunk: number, d: Q) {
  const c = d
    .select()
    .from(runChunks)
    .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
    .get();
  if (!c) refuse(worker, runId, chunk, 404, "no such chunk");
  return c;
}

/** The chunk as handed out to `worker` at `attempt`, or a refusal (409) naming why not. */
function heldChunk(worker: WorkerIdentity, runId: string, chunk: number, attempt: number, d: Q) {
  const run = runFor(worker, runId, chunk, d);
  const c = chunkRow(worker, runId, chunk, d);
  if (c.workerTokenId !== worker.id || c.attempts !== attempt)
    refuse(worker, runId, chunk, 409, `the chunk is not handed out to this worker at attempt ${attempt}`);
  if (c.state !== "running") refuse(worker, runId, chunk, 409, `the chunk is ${c.state}`);
  if (run.state !== "running") refuse(worker, runId, chunk, 409, `the run is ${run.state}`);
  return { run, c };
}

/** Stores a batch of a chunk's points (binary, run-wire.ts); returns how many were new and the run's stop request. */
export function ingestBatch(
  worker: WorkerIdentity,
  runId: string,
  chunk: number,
  attempt: number,
  body: Uint8Array,
  d: Q = db(),
): { stored: number; stop: StopKind } {
  const { run, c } = heldChunk(worker, runId, chunk, attempt, d);
  const layout = runLayoutHead(runId, d)!;
  let points;
  try {
    points = decodeBatch(body, countsOf(layout), c, layout.mismatch?.runs ?? 1, layout.expectations?.length ?? 0);
  } catch (e) {
    if (e instanceof BatchError) refuse(worker, runId, chunk, 422, e.message);
    throw e;
  }
  const stored = points.length > 0 ? storePoints(runId, points, d) : 0;
  return { stored, stop: stopOf(run, d) };
}

/**
 * Records a chunk's end: done (every point of its range must be stored; 409 otherwise), stopped early, or failed
 * with its message (which fails the run). Returns the run's stop request.
 */
export function endChunk(
  worker: WorkerIdentity,
  runId: string,
  chunk: number,
  end: ChunkEnd,
  d: Q = db(),
): { stop: StopKind } {
  const { run, c } = heldChunk(worker, runId, chunk, end.attempt, d);
  if (end.outcome === "failed") {
    writeBusy(() =>
      d
        .update(runChunks)
        .set({ state: "failed", error: end.message, finishedAt: new Date() })
        .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
        .run(),
    );
    return { stop: STOP_FAILED };
  }
  const layout = runLayoutHead(runId, d)!;
  const flags = Buffer.from(end.flags, "base64");
  if (flags.length !== 2 * ((layout.deviceCount + 7) >> 3))
    refuse(
      worker,
      runId,
      chunk,
      422,
      `flags: ${flags.length} bytes; the run's ${layout.deviceCount} devices need ${2 * ((layout.deviceCount + 7) >> 3)}`,
    );
  if (end.outcome === "done") {
    const have =
      d
        .select({ n: count() })
        .from(runPoints)
        .where(and(eq(runPoints.runId, runId), gte(runPoints.point, c.start), lt(runPoints.point, c.end)))
        .get()?.n ?? 0;
    if (have !== c.end - c.start)
      refuse(worker, runId, chunk, 409, `only ${have} of the chunk's ${c.end - c.start} points are stored`);
  }
  writeBusy(() =>
    d
      .update(runChunks)
      .set({ state: end.outcome, stats: JSON.stringify(end.stats), flags, finishedAt: new Date() })
      .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
      .run(),
  );
  return { stop: stopOf(run, d) };
}

/** The text of a commit that has a chunk handed out to `worker` in a running run; 404 otherwise. */
export function commitTextFor(worker: WorkerIdentity, commitId: string, d: Q = db()): string {
  const row = d
    .select({ text: commits.text, workspaceId: runs.workspaceId })
    .from(runs)
    .innerJoin(commits, eq(commits.id, runs.commitId))
    .innerJoin(runChunks, eq(runChunks.runId, runs.id))
    .where(and(eq(runs.commitId, commitId), eq(runs.state, "running"), eq(runChunks.workerTokenId, worker.id)))
    .get();
  if (!row || (worker.workspaceId !== null && row.workspaceId !== worker.workspaceId)) {
    console.warn(`runnel: refused worker ${worker.id} the text of commit ${commitId}: no chunk of it handed out`);
    throw new RequestError(404, "no running chunk of this commit is handed out to this worker");
  }
  return row.text;
}
