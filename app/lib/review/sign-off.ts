/**
 * What a sign-off approves, shown in its confirmation before the verdict is
 * recorded: the commit, the newest run of each of its analyses with the run's
 * state and validity warnings, and each reviewer's current verdict.
 *
 * Extension point: design checks (expectations) add their status per run
 * through `SignOffRun.checks` (filled by the checks module when it exists;
 * empty until then) and may require a reason through `reasonRequired`.
 */
import { and, desc, eq, inArray } from "drizzle-orm";
import { db, type Q } from "@/db";
import { commits, reviews, runs, users, type ReviewEntry, type RunWarning } from "@/db/schema";
import { analysisName } from "./run-tables";
import { layoutHeads } from "../run-layouts";

export interface SignOffCheck {
  name: string;
  status: "met" | "failed" | "not evaluated";
  detail?: string;
}

export interface SignOffRun {
  id: string;
  analysis: string;
  state: string;
  pointsDone: number;
  pointsTotal: number;
  warnings: RunWarning[];
  /** Design checks of the run (none until checks exist). */
  checks: SignOffCheck[];
}

export interface SignOffSummary {
  commit: { id: string; message: string; authorName: string; createdAt: number };
  /** The newest run of each analysis (done or not: a failed newest run is what the reviewer must see). */
  runs: SignOffRun[];
  /** True when the confirmation must carry a reason (e.g. a check failed). */
  reasonRequired: boolean;
  /** Why a reason is required, shown by the field. */
  reasonPrompt?: string;
}

/** The sign-off summary of each commit (unknown ids are left out). */
export function signOffSummaries(commitIds: string[], d: Q = db()): Record<string, SignOffSummary> {
  if (commitIds.length === 0) return {};
  const cs = d
    .select({
      id: commits.id,
      message: commits.message,
      authorName: users.name,
      createdAt: commits.createdAt,
    })
    .from(commits)
    .innerJoin(users, eq(users.id, commits.authorId))
    .where(inArray(commits.id, commitIds))
    .all();
  const all = d
    .select()
    .from(runs)
    .where(inArray(runs.commitId, commitIds))
    .orderBy(desc(runs.createdAt), desc(runs.id))
    .all();
  const heads = layoutHeads(
    all.map((r) => r.id),
    d,
  );
  const out: Record<string, SignOffSummary> = {};
  for (const c of cs) {
    const newest = new Map<string, SignOffRun>();
    for (const r of all) {
      if (r.commitId !== c.id) continue;
      const layout = heads.get(r.id);
      const analysis = layout ? analysisName(layout) : "not started";
      if (newest.has(analysis)) continue;
      newest.set(analysis, {
        id: r.id,
        analysis,
        state: r.state,
        pointsDone: r.pointsDone,
        pointsTotal: r.pointsTotal,
        warnings: r.warnings ?? [],
        checks: [],
      });
    }
    out[c.id] = {
      commit: { ...c, createdAt: c.createdAt.getTime() },
      runs: [...newest.values()],
      reasonRequired: false,
    };
  }
  return out;
}

/** The actor's newest review entry on each commit (null: none, or withdrawn). */
export function myVerdicts(
  reviewerId: string,
  commitIds: string[],
  d: Q = db(),
): Record<string, Exclude<ReviewEntry, "withdrawn"> | null> {
  const out: Record<string, Exclude<ReviewEntry, "withdrawn"> | null> = Object.fromEntries(
    commitIds.map((id) => [id, null]),
  );
  if (commitIds.length === 0) return out;
  const rows = d
    .select({ commitId: reviews.commitId, verdict: reviews.verdict })
    .from(reviews)
    .where(and(eq(reviews.reviewerId, reviewerId), inArray(reviews.commitId, commitIds)))
    .orderBy(desc(reviews.createdAt), desc(reviews.id))
    .all();
  const seen = new Set<string>();
  for (const r of rows) {
    if (seen.has(r.commitId)) continue;
    seen.add(r.commitId);
    out[r.commitId] = r.verdict === "withdrawn" ? null : r.verdict;
  }
  return out;
}
