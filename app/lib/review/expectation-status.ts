/**
 * A commit's expectations in one word, from its newest ended run's stored summary (`runs.expectations_failing`,
 * written when the run ended; nothing is solved or recomputed here): all pass, n failing, no checks (the network
 * states none), or not run (no run of the commit has ended). History rows, the workspace list, the compare page
 * and thread run cards show it.
 */
import { and, desc, inArray, notInArray } from "drizzle-orm";
import { db, type Q } from "@/db";
import { LIVE_RUN_STATES, runs } from "@/db/schema";
import { layoutHeads } from "../run-layouts";

export interface ExpectationBadge {
  status: "pass" | "fail" | "none" | "not-run";
  /** Expectations failing in that run (0 unless "fail"). */
  failing: number;
  /** Expectations its network states (0 for "none" and "not-run"). */
  count: number;
  /** The run the status comes from; null when not run. */
  runId: string | null;
}

export const NOT_RUN: ExpectationBadge = { status: "not-run", failing: 0, count: 0, runId: null };

/** The status of one run from its stored figures and the number of expectations its layout names. */
export function runExpectationBadge(runId: string, failing: number | null, count: number): ExpectationBadge {
  if (count === 0) return { status: "none", failing: 0, count: 0, runId };
  if (failing === null) return { ...NOT_RUN, runId };
  return { status: failing > 0 ? "fail" : "pass", failing, count, runId };
}

/** Each commit's status from its newest ended run (commits without one: not run). */
export function expectationBadges(commitIds: readonly string[], d: Q = db()): Map<string, ExpectationBadge> {
  const out = new Map<string, ExpectationBadge>(commitIds.map((id) => [id, NOT_RUN]));
  if (commitIds.length === 0) return out;
  const newest = new Map<string, { id: string; failing: number | null }>();
  const rows = d
    .select({ id: runs.id, commitId: runs.commitId, failing: runs.expectationsFailing })
    .from(runs)
    .where(and(inArray(runs.commitId, [...commitIds]), notInArray(runs.state, [...LIVE_RUN_STATES])))
    .orderBy(desc(runs.createdAt), desc(runs.id))
    .all();
  for (const r of rows) if (!newest.has(r.commitId)) newest.set(r.commitId, r);
  const heads = layoutHeads(
    [...newest.values()].map((r) => r.id),
    d,
  );
  for (const [commitId, r] of newest)
    out.set(commitId, runExpectationBadge(r.id, r.failing, heads.get(r.id)?.expectations?.length ?? 0));
  return out;
}
