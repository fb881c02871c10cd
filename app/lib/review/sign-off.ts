/**
 * What a sign-off approves, shown in its confirmation before the verdict is
 * recorded: the commit, the newest run of each of its analyses with the run's
 * state and validity warnings, and each reviewer's current verdict.
 *
 * Each run's expectations (docs/language.md, Expectations) come from the
 * summaries stored when it ended (`runs.expectations`), never recomputed: a
 * commit whose newest run of any analysis fails one needs a written reason to
 * be signed off (`reasonRequired`, enforced by `signOffReasonError` where a
 * verdict is recorded).
 */
import { and, desc, eq, inArray, lte } from "drizzle-orm";
import { db, type Q } from "@/db";
import { commits, reviews, runs, users, type ReviewEntry, type RunWarning } from "@/db/schema";
import type { ExpectationSummary } from "@/src/solver/expectation-summary";
import { formatEng, formatNumber } from "../format";
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
  /** The run's expectations (none when its network states none); "not evaluated" while it has not ended. */
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
  /** Fewest characters of a required reason. */
  reasonMinLength: number;
  /** The newest runs' expectations in one line: "all 6 pass", "2 of 6 failing: a, b", or null when none states any. */
  expectations: string | null;
  /** Names of the expectations the newest runs fail (a sign-off needs a reason when there is any). */
  failing: string[];
}

/** A run's expectations as the confirmation lists them. */
function checksOf(stored: ExpectationSummary[] | null, names: string[], ended: boolean): SignOffCheck[] {
  if (!ended || !stored) return names.map((name) => ({ name, status: "not evaluated" as const }));
  return stored.map((x) => ({
    name: x.name,
    status: x.passed ? ("met" as const) : ("failed" as const),
    detail: detailOf(x),
  }));
}

function detailOf(x: ExpectationSummary): string {
  const parts = [`${x.pointsPassed.toLocaleString("en-US")}/${x.points.toLocaleString("en-US")} points pass`];
  if (x.margin !== null) parts.push(`margin ${x.unit ? formatEng(x.margin, x.unit, 3) : formatNumber(x.margin, 3)}`);
  if (x.yield) parts.push(`yield ${((100 * x.yield.passed) / x.yield.samples).toFixed(1)} %`);
  if (x.firstFailure) parts.push(`first fails at point ${x.firstFailure.point}`);
  return parts.join(", ");
}

/**
 * The sign-off summary of each commit (unknown ids are left out); with `before`, as it stood then (the runs started
 * by that time: what a sign-off given then was shown).
 */
export function signOffSummaries(commitIds: string[], d: Q = db(), before?: Date): Record<string, SignOffSummary> {
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
    .where(and(inArray(runs.commitId, commitIds), before ? lte(runs.createdAt, before) : undefined))
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
      const ended = r.state !== "queued" && r.state !== "running";
      newest.set(analysis, {
        id: r.id,
        analysis,
        state: r.state,
        pointsDone: r.pointsDone,
        pointsTotal: r.pointsTotal,
        warnings: r.warnings ?? [],
        checks: checksOf(
          r.expectations,
          (layout?.expectations ?? []).map((x) => x.name),
          ended,
        ),
      });
    }
    const newestRuns = [...newest.values()];
    const checks = newestRuns.flatMap((r) => r.checks);
    const failing = [...new Set(checks.filter((x) => x.status === "failed").map((x) => x.name))];
    const names = new Set(checks.map((x) => x.name));
    const notEvaluated = checks.some((x) => x.status === "not evaluated");
    out[c.id] = {
      commit: { ...c, createdAt: c.createdAt.getTime() },
      runs: newestRuns,
      reasonRequired: failing.length > 0,
      reasonMinLength: MIN_SIGN_OFF_REASON,
      ...(failing.length
        ? {
            reasonPrompt: `The newest run fails ${failing.length === 1 ? "an expectation" : `${failing.length} expectations`} (${failing.join(", ")}): write why this commit may be signed off anyway.`,
          }
        : {}),
      expectations:
        names.size === 0
          ? null
          : failing.length
            ? `${failing.length} of ${names.size} failing: ${failing.join(", ")}`
            : notEvaluated
              ? `${names.size} not evaluated yet`
              : `all ${names.size} pass`,
      failing,
    };
  }
  return out;
}

/** Fewest characters of a reason to sign off a commit whose newest run fails an expectation. */
export const MIN_SIGN_OFF_REASON = 10;

/**
 * Why a sign-off of `commitId` with note `body` is refused, or null: its newest runs fail expectations and the
 * note does not say why (fewer than MIN_SIGN_OFF_REASON characters besides white space).
 */
export function signOffReasonError(commitId: string, body: string, d: Q = db()): string | null {
  const s = signOffSummaries([commitId], d)[commitId];
  if (!s || !s.reasonRequired) return null;
  if (body.replace(/\s+/g, " ").trim().length >= MIN_SIGN_OFF_REASON) return null;
  return `body: the newest run of this commit fails ${s.failing.join(", ")}; a sign-off needs a written reason (at least ${MIN_SIGN_OFF_REASON} characters)`;
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
