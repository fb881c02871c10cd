/**
 * Runs executed in-process for integration tests: a network committed in the demo workspace by the demo designer,
 * a run row stored for one of its commits, and the run executed on this thread (`executeRun`) to the end.
 */
import { expect } from "vitest";
import type { DB } from "@/db";
import { createNetwork } from "@/app/lib/networks";
import { executeRun } from "@/app/lib/run-exec";
import { insertRun } from "@/app/lib/runs";
import { WORKSPACE } from "./accounts";

export type Chunk = { start: number; end: number };

export const DESIGNER = "u_designer1";

/** A run row for `commitId` with `points` points in `chunks` (one chunk by default); not executed. */
export function storeRun(
  db: DB,
  ids: { commitId: string; networkId: string },
  points: number,
  chunks: Chunk[] = [{ start: 0, end: points }],
  timeLimitMs = 60_000,
): string {
  return insertRun({ ...ids, createdBy: DESIGNER, pointsTotal: points, timeLimitMs, chunks }, db);
}

/** Stores a run of `commitId` and executes it; the run must end done. Returns the run's id. */
export function executeStoredRun(
  db: DB,
  ids: { commitId: string; networkId: string },
  points: number,
  chunks?: Chunk[],
  timeLimitMs?: number,
): string {
  const id = storeRun(db, ids, points, chunks, timeLimitMs);
  expect(executeRun(id, {}, db).state).toBe("done");
  return id;
}

/** Creates the network `name` with `text` as its first commit. */
export function commitNetwork(db: DB, name: string, text: string): { networkId: string; commitId: string } {
  const { network, commit } = createNetwork({ workspaceId: WORKSPACE.id, name, text, authorId: DESIGNER }, db);
  if (!commit) throw new Error(`the network ${name} was not committed`);
  return { networkId: network.id, commitId: commit.id };
}

/** Creates the network `name` with `text`, then runs its commit to the end. */
export function commitAndRun(
  db: DB,
  name: string,
  text: string,
  points: number,
  chunks?: Chunk[],
  timeLimitMs?: number,
): { networkId: string; commitId: string; runId: string } {
  const ids = commitNetwork(db, name, text);
  return { ...ids, runId: executeStoredRun(db, ids, points, chunks, timeLimitMs) };
}
