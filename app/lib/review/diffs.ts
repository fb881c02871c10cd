/**
 * Comparisons between commits: the text diff, the results diff of their runs,
 * and the per-run diff stored when a run finishes (history badges).
 * Functions take already-authorised arguments (routes ask the policy module first).
 */
import { desc, eq, inArray } from "drizzle-orm";
import { db } from "@/db";
import { commitDiffs, commits, reviews, runs, users, type StoredDiffSummary, type Verdict } from "@/db/schema";
import { RequestError } from "../http";
import { getCommit } from "../networks";
import type { Q } from "@/db";
import { DEFAULT_TOLERANCE, diffResults, summarize, type ResultsDiff, type Tolerance } from "./results-diff";
import { diffText, type TextDiff } from "./text-diff";
import { latestDoneRuns, runTable, analysisName } from "./run-tables";
import { layoutHead } from "../run-layouts";
import { expectationBadges, NOT_RUN, type ExpectationBadge } from "./expectation-status";
import { compareExpectations, type ExpectationChange } from "./expectation-compare";
import { processShared } from "../process-shared";

/** Beyond-tolerance rows kept in a stored diff. */
export const STORED_ROWS = 200;

const finite = (v: number) => (Number.isFinite(v) ? v : null);

/**
 * Computes and stores, once, the results diff of a finished run against the
 * parent commit's newest finished run of the same analysis. Idempotent: a
 * second call returns the stored row. Returns null for a run that is not done.
 */
export function storeCommitDiff(runId: string, d: Q = db()): typeof commitDiffs.$inferSelect | null {
  const stored = d.select().from(commitDiffs).where(eq(commitDiffs.runId, runId)).get();
  if (stored) return stored;
  const run = d.select().from(runs).where(eq(runs.id, runId)).get();
  if (!run || run.state !== "done") return null;
  const layout = layoutHead(runId, d);
  if (!layout) return null;
  const analysis = analysisName(layout);
  const commit = d.select({ parentId: commits.parentId }).from(commits).where(eq(commits.id, run.commitId)).get();
  const parentId = commit?.parentId ?? null;
  const base = parentId ? (latestDoneRuns(parentId, d).get(analysis) ?? null) : null;
  let summary: StoredDiffSummary;
  let compared = 0;
  let beyond = 0;
  if (!base) {
    summary = {
      names: [],
      rows: [],
      nameChanges: [],
      tolerance: DEFAULT_TOLERANCE,
      note: parentId ? `the parent commit has no finished run of ${analysis}` : "first commit: nothing to compare with",
    };
  } else {
    const diff = diffResults([runTable(base.id, d)!], [runTable(runId, d)!], { limit: STORED_ROWS });
    compared = diff.compared;
    beyond = diff.beyond;
    summary = {
      names: summarize(diff, 8).names,
      rows: diff.rows.map((r) => ({
        point: r.point,
        kind: r.kind,
        quantity: r.quantity,
        name: r.name,
        from: finite(r.from),
        to: finite(r.to),
        rel: finite(r.rel),
      })),
      nameChanges: diff.names,
      tolerance: diff.tolerance,
    };
  }
  return (
    d
      .insert(commitDiffs)
      .values({
        runId,
        commitId: run.commitId,
        workspaceId: run.workspaceId,
        baseRunId: base?.id ?? null,
        baseCommitId: base ? parentId : null,
        analysis,
        compared,
        beyond,
        summary,
      })
      .onConflictDoNothing()
      .returning()
      .get() ?? d.select().from(commitDiffs).where(eq(commitDiffs.runId, runId)).get()!
  );
}

export type ReviewState = "open" | Verdict;

export interface CommitBadge {
  commitId: string;
  review: ReviewState;
  /** Each reviewer's newest verdict (none for a reviewer whose newest entry withdrew it). */
  verdicts: { reviewerId: string; reviewerName: string; verdict: Verdict; at: number; threadId: string | null }[];
  /** Newest stored diff per analysis. */
  diffs: { runId: string; analysis: string; compared: number; beyond: number; names: string[]; note?: string }[];
  /** Its expectations from its newest ended run (expectation-status.ts). */
  expectations: ExpectationBadge;
}

/** The review state of commits (invariant in db/review-schema.ts). */
export function reviewStateOf(verdicts: { verdict: Verdict }[]): ReviewState {
  if (verdicts.some((v) => v.verdict === "rework")) return "rework";
  if (verdicts.some((v) => v.verdict === "signed_off")) return "signed_off";
  return "open";
}

/** Sign-off state, "N values moved" and the expectations' status of each commit (history badges). */
export function commitBadges(commitIds: string[], d: Q = db()): Map<string, CommitBadge> {
  const out = new Map<string, CommitBadge>(
    commitIds.map((id) => [id, { commitId: id, review: "open", verdicts: [], diffs: [], expectations: NOT_RUN }]),
  );
  if (commitIds.length === 0) return out;
  for (const [id, x] of expectationBadges(commitIds, d)) out.get(id)!.expectations = x;
  const rows = d
    .select({
      commitId: reviews.commitId,
      reviewerId: reviews.reviewerId,
      reviewerName: users.name,
      verdict: reviews.verdict,
      at: reviews.createdAt,
      threadId: reviews.threadId,
    })
    .from(reviews)
    .innerJoin(users, eq(users.id, reviews.reviewerId))
    .where(inArray(reviews.commitId, commitIds))
    .orderBy(desc(reviews.createdAt), desc(reviews.id))
    .all();
  const seen = new Set<string>();
  for (const r of rows) {
    // Each reviewer's newest row decides; a withdrawn verdict leaves that reviewer with none.
    if (seen.has(`${r.commitId} ${r.reviewerId}`)) continue;
    seen.add(`${r.commitId} ${r.reviewerId}`);
    if (r.verdict === "withdrawn") continue;
    out.get(r.commitId)!.verdicts.push({ ...r, verdict: r.verdict, at: r.at.getTime() });
  }
  for (const b of out.values()) b.review = reviewStateOf(b.verdicts);
  const diffs = d
    .select()
    .from(commitDiffs)
    .where(inArray(commitDiffs.commitId, commitIds))
    .orderBy(desc(commitDiffs.createdAt))
    .all();
  for (const x of diffs) {
    const b = out.get(x.commitId)!;
    if (b.diffs.some((y) => y.analysis === x.analysis)) continue;
    b.diffs.push({
      runId: x.runId,
      analysis: x.analysis,
      compared: x.compared,
      beyond: x.beyond,
      names: x.summary.names,
      note: x.summary.note,
    });
  }
  return out;
}

/** The review badge of one commit. */
export function commitBadge(commitId: string, d: Q = db()): CommitBadge {
  const badge = commitBadges([commitId], d).get(commitId);
  if (!badge) throw new Error(`commitBadges left out ${commitId}`);
  return badge;
}

/** Results diffs of finished runs (they never change, so an entry never goes stale), newest use last. */
const RESULTS_CACHE_SIZE = 8;
const resultsCache = processShared("diffs.results", () => new Map<string, ResultsDiff>());

function cachedResults(key: string, compute: () => ResultsDiff): ResultsDiff {
  const hit = resultsCache.get(key);
  if (hit) {
    resultsCache.delete(key);
    resultsCache.set(key, hit);
    return hit;
  }
  const made = compute();
  if (resultsCache.size >= RESULTS_CACHE_SIZE) resultsCache.delete(resultsCache.keys().next().value!);
  resultsCache.set(key, made);
  return made;
}

export interface Comparison {
  from: { id: string; message: string; authorName: string; createdAt: number };
  to: { id: string; message: string; authorName: string; createdAt: number };
  networkId: string;
  text: TextDiff;
  /** Runs compared per analysis (the newest finished run of each commit). */
  runs: { analysis: string; fromRunId: string | null; toRunId: string | null }[];
  results: ResultsDiff;
  /** Each expectation's status before → after in those runs, newly failing first (expectation-compare.ts). */
  expectations: ExpectationChange[];
}

/**
 * Compares two commits of one network: text diff, and results diff of each
 * analysis both have a finished run of. 404 for an unknown commit, 422 when
 * they belong to different networks.
 */
export function compareCommits(
  fromId: string,
  toId: string,
  options: { tolerance?: Partial<Tolerance>; includeWithin?: boolean; limit?: number } = {},
  d: Q = db(),
): Comparison {
  const a = getCommit(fromId, d);
  const b = getCommit(toId, d);
  if (!a) throw new RequestError(404, `commit ${fromId} not found`);
  if (!b) throw new RequestError(404, `commit ${toId} not found`);
  if (a.networkId !== b.networkId) throw new RequestError(422, "the two commits belong to different networks");
  const ra = latestDoneRuns(a.id, d);
  const rb = latestDoneRuns(b.id, d);
  const analyses = [...new Set([...rb.keys(), ...ra.keys()])];
  const tables = (m: typeof ra) => [...m.values()].map((r) => runTable(r.id, d)).filter((t) => t !== null);
  const pairs = analyses.map((an) => ({
    analysis: an,
    fromRunId: ra.get(an)?.id ?? null,
    toRunId: rb.get(an)?.id ?? null,
  }));
  const brief = (c: typeof a) => ({ id: c.id, message: c.message, authorName: c.authorName, createdAt: c.createdAt });
  return {
    from: brief(a),
    to: brief(b),
    networkId: a.networkId,
    text: diffText(a.text, b.text),
    runs: pairs,
    expectations: compareExpectations(pairs, d),
    // the page and GET /api/compare ask again for the same pair: the runs' tables are decoded and diffed once
    results: cachedResults(
      JSON.stringify([
        [...ra.values()].map((r) => r.id),
        [...rb.values()].map((r) => r.id),
        { ...DEFAULT_TOLERANCE, ...options.tolerance },
        options.includeWithin ?? false,
        options.limit ?? null,
      ]),
      () => diffResults(tables(ra), tables(rb), options),
    ),
  };
}
