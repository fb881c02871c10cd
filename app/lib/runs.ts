/**
 * Run queries: the data layer of the `runs` table. Reading runs, inserting a
 * queued run, ending a run that is still open, cancel requests and the
 * start-up recovery scan. Who executes a run lives in run-supervisor.ts.
 */
import { and, asc, count, desc, eq, inArray } from "drizzle-orm";
import { db, type Q } from "@/db";
import { newId } from "@/db/ids";
import {
  LIVE_RUN_STATES,
  networks,
  runChunks,
  runs,
  users,
  type RunFailure,
  type RunState,
  type RunWarning,
} from "@/db/schema";
import { RequestError } from "./http";
import { notifyRunEnded } from "./inbox";
import { type StoredLayout, writeLayout } from "./run-layouts";

/** Ends a run that is still queued or running; no-op (false) for a run that already ended. */
export function finishRun(runId: string, state: RunState, reason: string | null, d: Q = db()): boolean {
  const r = d
    .update(runs)
    .set({ state, reason, finishedAt: new Date() })
    .where(and(eq(runs.id, runId), inArray(runs.state, LIVE_RUN_STATES)))
    .run();
  if (r.changes > 0 && state === "failed") notifyRunEnded(runId, d);
  return r.changes > 0;
}

export interface NewRun {
  commitId: string;
  networkId: string;
  createdBy: string;
  pointsTotal: number;
  timeLimitMs: number;
  /** The run's layout (app/lib/run-layouts.ts) and model figures, when known at queue time. */
  layout?: StoredLayout;
  model?: Record<string, unknown>;
  /** The chunk plan; none: one chunk over every point, made when the run is dispatched. */
  chunks?: readonly { start: number; end: number }[];
}

/** Inserts a `queued` run of a commit and its chunk plan, in one transaction; returns its id. */
export function insertRun(run: NewRun, d: Q = db()): string {
  const id = newId("r");
  const { chunks, layout, ...fields } = run;
  d.transaction(
    (tx) => {
      tx.insert(runs)
        .values({ id, ...fields, workspaceId: workspaceOfNetwork(tx, run.networkId) })
        .run();
      if (layout) writeLayout(id, layout, tx);
      if (chunks && chunks.length > 0)
        tx.insert(runChunks)
          .values(chunks.map((c, chunk) => ({ runId: id, chunk, start: c.start, end: c.end })))
          .run();
    },
    { behavior: "immediate" },
  );
  return id;
}

/** How many runs a user has queued (not started yet). */
export function queuedRunsOf(userId: string, d: Q = db()): number {
  return (
    d
      .select({ n: count() })
      .from(runs)
      .where(and(eq(runs.createdBy, userId), eq(runs.state, "queued")))
      .get()?.n ?? 0
  );
}

/** Chunks of a run not solved yet (queued, or left running or stopped by a process that ended), in order. */
export function openChunksOf(runId: string, d: Q = db()): number[] {
  return d
    .select({ chunk: runChunks.chunk })
    .from(runChunks)
    .where(and(eq(runChunks.runId, runId), inArray(runChunks.state, ["queued", "running", "stopped"])))
    .orderBy(asc(runChunks.chunk))
    .all()
    .map((c) => c.chunk);
}

function workspaceOfNetwork(d: Q, networkId: string): string {
  const row = d.select({ workspaceId: networks.workspaceId }).from(networks).where(eq(networks.id, networkId)).get();
  if (!row) throw new RequestError(404, "not found");
  return row.workspaceId;
}

/** The id of a finished (`done`) run of the commit, or null. */
export function doneRunOf(commitId: string, d: Q = db()): string | null {
  return (
    d
      .select({ id: runs.id })
      .from(runs)
      .where(and(eq(runs.commitId, commitId), eq(runs.state, "done")))
      .get()?.id ?? null
  );
}

/** Records a cancel request (the worker executing the run reads it). */
export function requestCancel(runId: string, d: Q = db()): void {
  d.update(runs).set({ cancelRequested: true }).where(eq(runs.id, runId)).run();
}

/** What the dispatcher needs of a run; null when it does not exist. */
export function runDispatchInfo(
  runId: string,
  d: Q = db(),
): { state: RunState; workspaceId: string; timeLimitMs: number; startedAt: Date | null } | null {
  return (
    d
      .select({
        state: runs.state,
        workspaceId: runs.workspaceId,
        timeLimitMs: runs.timeLimitMs,
        startedAt: runs.startedAt,
      })
      .from(runs)
      .where(eq(runs.id, runId))
      .get() ?? null
  );
}

/** Marks every `running` run interrupted (a stopped server's runs); returns how many. */
export function interruptRunningRuns(reason: string, d: Q = db()): number {
  return d
    .update(runs)
    .set({ state: "interrupted", reason, finishedAt: new Date() })
    .where(eq(runs.state, "running"))
    .run().changes;
}

/** Runs in a state, oldest first, with their workspace. */
export function runsIn(state: RunState, d: Q = db()): { id: string; workspaceId: string }[] {
  return d
    .select({ id: runs.id, workspaceId: runs.workspaceId })
    .from(runs)
    .where(eq(runs.state, state))
    .orderBy(asc(runs.createdAt))
    .all();
}

/** Ids of `queued` runs, oldest first. */
export function queuedRunIds(d: Q = db()): string[] {
  return d
    .select({ id: runs.id })
    .from(runs)
    .where(eq(runs.state, "queued"))
    .orderBy(asc(runs.createdAt))
    .all()
    .map((r) => r.id);
}

export interface RunRow {
  id: string;
  commitId: string;
  networkId: string;
  workspaceId: string;
  createdBy: string;
  createdByName: string;
  state: RunState;
  reason: string | null;
  pointsTotal: number;
  pointsDone: number;
  timeLimitMs: number;
  cancelRequested: boolean;
  newtonPoints: number | null;
  devicesNotWeak: number | null;
  devicesNotSaturated: number | null;
  maxResidual: number | null;
  solverReason: string | null;
  model: Record<string, unknown> | null;
  warnings: RunWarning[] | null;
  failures: RunFailure[] | null;
  /** How many of the network's expectations fail over the run; null when it states none or the run is not over. */
  expectationsFailing: number | null;
  createdAt: number;
  startedAt: number | null;
  finishedAt: number | null;
}

const runColumns = {
  id: runs.id,
  commitId: runs.commitId,
  networkId: runs.networkId,
  workspaceId: runs.workspaceId,
  createdBy: runs.createdBy,
  createdByName: users.name,
  state: runs.state,
  reason: runs.reason,
  pointsTotal: runs.pointsTotal,
  pointsDone: runs.pointsDone,
  timeLimitMs: runs.timeLimitMs,
  cancelRequested: runs.cancelRequested,
  newtonPoints: runs.newtonPoints,
  devicesNotWeak: runs.devicesNotWeak,
  devicesNotSaturated: runs.devicesNotSaturated,
  maxResidual: runs.maxResidual,
  solverReason: runs.solverReason,
  model: runs.model,
  warnings: runs.warnings,
  failures: runs.failures,
  expectationsFailing: runs.expectationsFailing,
  createdAt: runs.createdAt,
  startedAt: runs.startedAt,
  finishedAt: runs.finishedAt,
};

type StoredRun = Omit<RunRow, "createdAt" | "startedAt" | "finishedAt"> & {
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
};

function toRunRow(r: StoredRun): RunRow {
  return {
    ...r,
    createdAt: r.createdAt.getTime(),
    startedAt: r.startedAt?.getTime() ?? null,
    finishedAt: r.finishedAt?.getTime() ?? null,
  };
}

export function getRun(id: string, d: Q = db()): RunRow | null {
  const r = d.select(runColumns).from(runs).innerJoin(users, eq(users.id, runs.createdBy)).where(eq(runs.id, id)).get();
  return r ? toRunRow(r) : null;
}

/** Runs of a commit (or of a network when `commitId` is null), newest first. */
export function listRuns(where: { commitId?: string; networkId?: string }, limit = 100, d: Q = db()): RunRow[] {
  const cond = where.commitId ? eq(runs.commitId, where.commitId) : eq(runs.networkId, where.networkId ?? "");
  return d
    .select(runColumns)
    .from(runs)
    .innerJoin(users, eq(users.id, runs.createdBy))
    .where(cond)
    .orderBy(desc(runs.createdAt))
    .limit(limit)
    .all()
    .map(toRunRow);
}
