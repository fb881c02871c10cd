/**
 * The database side of executing a run: claiming it, solving a chunk into
 * `run_points` (the local pool's threads; the demo seed in-process), storing
 * a chunk's points posted by a queue worker, and ending the run once every
 * chunk is in (run-wide figures merged from the chunks, final state, the
 * stored commit diff).
 *
 * Contracts
 * - A run is claimed (queued → running, started_at) once, by its first chunk;
 *   a run with a cancel request is never claimed.
 * - Points are written with INSERT … ON CONFLICT DO NOTHING in short
 *   BEGIN IMMEDIATE transactions (a batch of run-chunk.ts: ≤ 64 points, about
 *   4 MB, 200 ms of solving), and `points_done` grows by the rows actually
 *   inserted: a chunk solved twice (a retry) stores every point once. A write
 *   that meets SQLITE_BUSY after the busy timeout is retried with back-off.
 * - A chunk is `done` in the same transaction as its last points, with its
 *   figures; `failed` with its message. `finalizeRun` ends the run from the
 *   chunks (and the stop request that ended it early) and is a no-op for a run
 *   that has already ended, so any number of callers may race to it.
 */
import { notifyRunEnded } from "./inbox";
import { and, asc, count, eq, inArray, sql } from "drizzle-orm";
import { commits, LIVE_RUN_STATES, runChunks, runPoints, runs, type RunState } from "@/db/schema";
import { elaborate, type Network } from "@/src/lang/index";
import { db, type Q } from "@/db";
import type { StoredPoint } from "./point-codec";
import { insertPoints, layoutOf, type RunLayout } from "./results";
import { hasLayout, layoutHead, storedLayout, writeLayout } from "./run-layouts";
import {
  solveChunk,
  STOP_CANCEL,
  STOP_NONE,
  STOP_TIME,
  type ChunkRange,
  type StopKind,
  type TestFault,
} from "./run-chunk";
import { modelOf } from "./run-plan";
import { mergeChunks, type ChunkStats } from "./run-stats";
import { runExpectations, saturationCovered } from "./run-expectations";
import { storeCommitDiff } from "./review/diffs";
import type { Tolerance } from "./review/results-diff";

export { STOP_CANCEL, STOP_FAILED, STOP_NONE, STOP_TIME } from "./run-chunk";
export type { RunWarning } from "./run-stats";

/** A task of the local pool's threads (app/lib/run-worker.ts). */
export type RunTask =
  | {
      kind: "chunk";
      runId: string;
      chunk: number;
      /** Absolute path of the SQLite file. */
      dbFile: string;
      /** Int32Array(1) over this buffer: STOP_* set by the supervisor for every chunk of the run. */
      stop: SharedArrayBuffer;
      fault?: TestFault;
    }
  | { kind: "finalize"; runId: string; dbFile: string; forced?: { state: RunState; reason: string } }
  /** The comparison of two done runs, computed ahead of a visit (app/lib/review/compare-data.ts precomputeForRun). */
  | { kind: "compare"; fromRunId: string; toRunId: string; tolerance: Tolerance; dbFile: string };

export interface RunTaskResult {
  state: RunState;
  reason: string | null;
  pointsDone: number;
}

/** How a chunk ended in a pool thread. */
export interface ChunkResult {
  /** done: every point stored; stopped: a stop request ended it early; failed: `message`; skipped: the run is not running. */
  outcome: "done" | "stopped" | "failed" | "skipped";
  stopped: StopKind;
  message: string | null;
}

export interface ExecControl {
  stop?: Int32Array;
  fault?: TestFault;
  now?: () => number;
}

const CANCEL_POLL_MS = 250;

/** Claims a queued run (queued → running) unless a cancel was requested; true when this call claimed it. */
export function claimRun(runId: string, now = Date.now(), d: Q = db()): boolean {
  return (
    d
      .update(runs)
      .set({ state: "running", startedAt: new Date(now) })
      .where(and(eq(runs.id, runId), eq(runs.state, "queued"), eq(runs.cancelRequested, false)))
      .run().changes > 0
  );
}

/** Stores the run's chunk plan (one chunk over every point when none is given) unless it has one. */
export function ensureChunks(runId: string, ranges?: readonly ChunkRange[], d: Q = db()): ChunkRange[] {
  const have = d
    .select({ start: runChunks.start, end: runChunks.end })
    .from(runChunks)
    .where(eq(runChunks.runId, runId))
    .orderBy(asc(runChunks.chunk))
    .all();
  if (have.length > 0) return have;
  const row = d.select({ total: runs.pointsTotal }).from(runs).where(eq(runs.id, runId)).get();
  const plan = ranges && ranges.length > 0 ? ranges : [{ start: 0, end: row?.total ?? 0 }];
  d.insert(runChunks)
    .values(plan.map((r, chunk) => ({ runId, chunk, start: r.start, end: r.end })))
    .onConflictDoNothing()
    .run();
  return [...plan];
}

/** The elaborated network and layout of a commit, kept per thread for the commits it last ran. */
const networkCache = new Map<string, { net: Network; layout: RunLayout } | { error: string }>();
const CACHED_NETWORKS = 2;

/** Forgets the cached networks (a thread that has been idle gives their memory back: app/lib/worker-memory.ts). */
export function dropNetworkCache(): void {
  networkCache.clear();
}

export function networkOf(
  commitId: string,
  text: () => string | null,
): { net: Network; layout: RunLayout } | { error: string } {
  const hit = networkCache.get(commitId);
  if (hit) {
    networkCache.delete(commitId);
    networkCache.set(commitId, hit);
    return hit;
  }
  const t = text();
  let entry: { net: Network; layout: RunLayout } | { error: string };
  if (t === null) entry = { error: "the commit of this run no longer exists" };
  else {
    const result = elaborate(t);
    entry = result.network
      ? { net: result.network, layout: layoutOf(result.network) }
      : {
          error: `the commit has errors: ${result.diagnostics.find((x) => x.severity === "error")?.message ?? "it does not elaborate"}`,
        };
  }
  networkCache.set(commitId, entry);
  while (networkCache.size > CACHED_NETWORKS) networkCache.delete(networkCache.keys().next().value as string);
  return entry;
}

/**
 * Solves one chunk of a running run into run_points (see the module comment). Claims the run when it is still
 * queued. Never throws for a problem of the run: it ends `failed` with the message.
 */
export function executeChunk(runId: string, chunk: number, control: ExecControl = {}, d: Q = db()): ChunkResult {
  const now = control.now ?? Date.now;
  claimRun(runId, now(), d);
  const row = d
    .select({
      state: runs.state,
      commitId: runs.commitId,
      startedAt: runs.startedAt,
      timeLimitMs: runs.timeLimitMs,
    })
    .from(runs)
    .where(eq(runs.id, runId))
    .get();
  const c = d
    .select({ start: runChunks.start, end: runChunks.end, state: runChunks.state })
    .from(runChunks)
    .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
    .get();
  if (!row || row.state !== "running" || !c || c.state === "done")
    return { outcome: "skipped", stopped: STOP_NONE, message: null };
  writeBusy(() =>
    d
      .update(runChunks)
      .set({ state: "running", attempts: sql`${runChunks.attempts} + 1`, claimedAt: new Date(now()) })
      .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
      .run(),
  );
  try {
    const found = networkOf(row.commitId, () => {
      const r = d.select({ text: commits.text }).from(commits).where(eq(commits.id, row.commitId)).get();
      return r?.text ?? null;
    });
    if ("error" in found) return failChunk(runId, chunk, found.error, d);
    const { net, layout } = found;
    // A large network's layout is left to its first chunk (app/lib/run-supervisor.ts): written here, off the
    // request thread.
    if (!hasLayout(runId, d)) {
      const stored = storedLayout(layout);
      writeBusy(() => writeLayout(runId, stored, d));
      writeBusy(() =>
        d
          .update(runs)
          .set({ model: modelOf(net) })
          .where(and(eq(runs.id, runId), sql`${runs.model} is null`))
          .run(),
      );
    }
    const deadline = (row.startedAt?.getTime() ?? now()) + row.timeLimitMs;
    let lastPoll = now();
    let polled: StopKind = STOP_NONE;
    const stop = (): StopKind => {
      const flag = control.stop ? (Atomics.load(control.stop, 0) as StopKind) : STOP_NONE;
      if (flag !== STOP_NONE) return flag;
      if (now() > deadline) return STOP_TIME;
      if (polled === STOP_NONE && now() - lastPoll > CANCEL_POLL_MS) {
        lastPoll = now();
        if (d.select({ c: runs.cancelRequested }).from(runs).where(eq(runs.id, runId)).get()?.c) polled = STOP_CANCEL;
      }
      return polled;
    };
    let pending: StoredPoint[] | null = null;
    const outcome = solveChunk(net, layout, c, {
      stop,
      fault: control.fault,
      now,
      onBatch: (points) => {
        // One batch behind, so that the last one is stored in the same transaction as the chunk's figures.
        if (pending) storePoints(runId, pending, d);
        pending = points;
      },
    });
    const stopped = outcome.stopped;
    writeBusy(() =>
      d.transaction(
        (tx) => {
          if (pending) storePointsIn(runId, pending, tx);
          tx.update(runChunks)
            .set({
              state: stopped === STOP_NONE ? "done" : "stopped",
              stats: JSON.stringify(outcome.stats),
              flags: Buffer.from(outcome.flags.buffer, outcome.flags.byteOffset, outcome.flags.byteLength),
              finishedAt: new Date(now()),
            })
            .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
            .run();
        },
        { behavior: "immediate" },
      ),
    );
    return { outcome: stopped === STOP_NONE ? "done" : "stopped", stopped, message: null };
  } catch (e) {
    return failChunk(runId, chunk, ((e as Error).message ?? String(e)).split("\n")[0], d);
  }
}

/** Marks a chunk failed with `message` (its run then ends failed with it). */
export function failChunk(runId: string, chunk: number, message: string, d: Q = db()): ChunkResult {
  writeBusy(() =>
    d
      .update(runChunks)
      .set({ state: "failed", error: message, finishedAt: new Date() })
      .where(and(eq(runChunks.runId, runId), eq(runChunks.chunk, chunk)))
      .run(),
  );
  return { outcome: "failed", stopped: STOP_NONE, message };
}

/** Stores points of a run in one short immediate transaction; returns how many were new. */
export function storePoints(runId: string, points: readonly StoredPoint[], d: Q = db()): number {
  return writeBusy(() => d.transaction((tx) => storePointsIn(runId, points, tx), { behavior: "immediate" }));
}

function storePointsIn(runId: string, points: readonly StoredPoint[], tx: Q): number {
  const added = insertPoints(runId, points, tx);
  if (added > 0)
    tx.update(runs)
      .set({ pointsDone: sql`${runs.pointsDone} + ${added}` })
      .where(eq(runs.id, runId))
      .run();
  return added;
}

/** Retries a write that met SQLITE_BUSY after the connection's busy timeout: up to BUSY_TRIES times, with back-off. */
export function writeBusy<T>(write: () => T): T {
  for (let attempt = 1; ; attempt++) {
    try {
      return write();
    } catch (e) {
      const code = (e as { code?: string }).code ?? "";
      if (!code.startsWith("SQLITE_BUSY") || attempt >= BUSY_TRIES) throw e;
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, Math.min(1_000, 25 * 2 ** attempt));
    }
  }
}
const BUSY_TRIES = 6;

/**
 * Ends a run from its chunks: the merged figures, then the final state. Without `forced`, a run whose chunks
 * are not all in (done, failed, or stopped by a stop request) is left as it is (null). A run that has already
 * ended is left as it is (its state is returned).
 */
export function finalizeRun(
  runId: string,
  forced?: { state: RunState; reason: string },
  now = Date.now(),
  d: Q = db(),
): RunTaskResult | null {
  const row = d.select().from(runs).where(eq(runs.id, runId)).get();
  if (!row) return { state: "failed", reason: "the run does not exist", pointsDone: 0 };
  if (row.state !== "queued" && row.state !== "running")
    return { state: row.state, reason: row.reason, pointsDone: row.pointsDone };
  const chunks = d.select().from(runChunks).where(eq(runChunks.runId, runId)).orderBy(asc(runChunks.chunk)).all();
  const pointsDone = d.select({ n: count() }).from(runPoints).where(eq(runPoints.runId, runId)).get()?.n ?? 0;
  const failed = chunks.find((c) => c.state === "failed");
  const allDone = chunks.length > 0 && chunks.every((c) => c.state === "done");
  const timeUp = row.startedAt !== null && now > row.startedAt.getTime() + row.timeLimitMs;
  const of = `${pointsDone.toLocaleString("en-US")} of ${row.pointsTotal.toLocaleString("en-US")} points`;
  let end: { state: RunState; reason: string | null } | null = null;
  if (forced) end = forced;
  else if (failed) end = { state: "failed", reason: `the run failed: ${failed.error ?? "a chunk failed"}` };
  else if (row.cancelRequested)
    end = { state: "canceled", reason: row.startedAt ? `canceled after ${of}` : "canceled before it started" };
  else if (!allDone && timeUp)
    end = { state: "failed", reason: `time limit of ${seconds(row.timeLimitMs)} reached after ${of}` };
  else if (!allDone) return null;

  const withStats = chunks.filter((c) => c.stats !== null);
  const layout = layoutHead(runId, d);
  const fig = mergeChunks(
    withStats.map((c) => ({ stats: JSON.parse(c.stats as string) as ChunkStats, flags: c.flags ?? null })),
    layout?.deviceCount ?? 0,
    layout ? saturationCovered(runId, layout, d) : null,
  );
  // The expectations over every stored point (a run that stopped early: over the points it reached).
  const expectations = layout ? runExpectations(runId, layout, row.pointsTotal, d) : null;
  if (!end) {
    if (fig.structural) end = { state: "failed", reason: `the network cannot be solved: ${fig.structural}` };
    else if (fig.points > 0 && fig.failureCount === fig.points)
      end = {
        state: "failed",
        reason: `no point could be solved: ${fig.failures[0]?.message ?? "every point failed"}`,
      };
    else end = { state: "done", reason: null };
  }
  const ended = writeBusy(() =>
    d
      .update(runs)
      .set({
        state: end.state,
        reason: end.reason,
        finishedAt: new Date(now),
        pointsDone,
        solverReason: fig.solverReason ?? row.solverReason,
        newtonPoints: fig.newtonPoints,
        devicesNotWeak: fig.devicesNotWeak,
        devicesNotSaturated: fig.devicesNotSaturated,
        maxResidual: fig.maxResidual,
        warnings: fig.warnings,
        failures: fig.failures,
        expectations,
        expectationsFailing: expectations ? expectations.filter((x) => !x.passed).length : null,
      })
      .where(and(eq(runs.id, runId), inArray(runs.state, LIVE_RUN_STATES)))
      .run(),
  );
  if (ended.changes === 0) {
    const again = d.select().from(runs).where(eq(runs.id, runId)).get()!;
    return { state: again.state, reason: again.reason, pointsDone: again.pointsDone };
  }
  try {
    notifyRunEnded(runId, d); // the inbox of whoever started it (app/lib/inbox.ts)
  } catch (e) {
    console.error(`run ${runId}: its inbox item could not be written: ${(e as Error).message}`);
  }
  if (end.state === "done") {
    // Review: the results diff against the parent commit's run, computed once (app/lib/review/diffs.ts); it never fails the run.
    try {
      storeCommitDiff(runId, d);
    } catch (e) {
      console.error(`run ${runId}: storing its commit diff failed: ${(e as Error).message}`);
    }
  }
  return { state: end.state, reason: end.reason, pointsDone };
}

function seconds(ms: number): string {
  return ms % 1000 === 0 ? `${ms / 1000} s` : `${(ms / 1000).toFixed(1)} s`;
}

/**
 * Executes a whole queued run in this thread, chunk after chunk, and ends it (the demo seed and tests; the
 * server runs chunks in its pool). A run without a chunk plan runs as one chunk.
 */
export function executeRun(runId: string, control: ExecControl = {}, d: Q = db()): RunTaskResult {
  const now = control.now ?? Date.now;
  const row = d.select({ state: runs.state }).from(runs).where(eq(runs.id, runId)).get();
  if (!row) return { state: "failed", reason: "the run does not exist", pointsDone: 0 };
  if (row.state === "queued") {
    const chunks = ensureChunks(runId, undefined, d);
    if (!claimRun(runId, now(), d)) return finalizeRun(runId, undefined, now(), d)!;
    for (let k = 0; k < chunks.length; k++) {
      const r = executeChunk(runId, k, control, d);
      if (r.outcome !== "done") break;
    }
  }
  return (
    finalizeRun(runId, undefined, now(), d) ?? {
      state: row.state,
      reason: null,
      pointsDone: 0,
    }
  );
}
