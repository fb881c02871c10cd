/**
 * The compare page's Expectations section: for each analysis both commits ran (their newest finished runs, as the
 * results diff takes them), each expectation's status before → after from the summaries stored when the runs ended
 * (never recomputed), newly failing first, then still failing, then newly passing, then the rest.
 */
import { inArray } from "drizzle-orm";
import { db, type Q } from "@/db";
import { runs } from "@/db/schema";
import type { ExpectationSummary } from "@/src/solver/expectation-summary";

export type ExpectationChangeKind =
  "newly failing" | "still failing" | "newly passing" | "still passing" | "added" | "removed";

/** One side of a change: its verdict, margin and points passing; null where the run does not state it. */
export interface ExpectationSide {
  passed: boolean;
  margin: number | null;
  unit: string | null;
  pointsPassed: number;
  points: number;
}

export interface ExpectationChange {
  analysis: string;
  name: string;
  change: ExpectationChangeKind;
  from: ExpectationSide | null;
  to: ExpectationSide | null;
}

const ORDER: Record<ExpectationChangeKind, number> = {
  "newly failing": 0,
  "still failing": 1,
  added: 2,
  "newly passing": 3,
  removed: 4,
  "still passing": 5,
};

const side = (x: ExpectationSummary | undefined): ExpectationSide | null =>
  x ? { passed: x.passed, margin: x.margin, unit: x.unit, pointsPassed: x.pointsPassed, points: x.points } : null;

function kindOf(from: ExpectationSide | null, to: ExpectationSide | null): ExpectationChangeKind {
  if (!to) return "removed";
  if (!from) return to.passed ? "added" : "newly failing";
  if (!to.passed) return from.passed ? "newly failing" : "still failing";
  return from.passed ? "still passing" : "newly passing";
}

/** The changes of two runs' stored summaries (either may be null: not run, or its network states none). */
export function diffExpectations(
  analysis: string,
  from: ExpectationSummary[] | null,
  to: ExpectationSummary[] | null,
): ExpectationChange[] {
  const a = new Map((from ?? []).map((x) => [x.name, x]));
  const b = new Map((to ?? []).map((x) => [x.name, x]));
  const names = [...b.keys(), ...[...a.keys()].filter((n) => !b.has(n))];
  return names.map((name) => {
    const f = side(a.get(name));
    const t = side(b.get(name));
    return { analysis, name, change: kindOf(f, t), from: f, to: t };
  });
}

/** Sorts changes: newly failing first, then still failing, added, newly passing, removed, still passing. */
export function orderChanges(changes: ExpectationChange[]): ExpectationChange[] {
  return changes
    .map((c, i) => ({ c, i }))
    .sort((x, y) => ORDER[x.c.change] - ORDER[y.c.change] || x.i - y.i)
    .map((x) => x.c);
}

/** The expectation changes between the runs a comparison pairs per analysis. */
export function compareExpectations(
  pairs: readonly { analysis: string; fromRunId: string | null; toRunId: string | null }[],
  d: Q = db(),
): ExpectationChange[] {
  const ids = pairs.flatMap((p) => [p.fromRunId, p.toRunId]).filter((x): x is string => x !== null);
  if (ids.length === 0) return [];
  const stored = new Map(
    d
      .select({ id: runs.id, x: runs.expectations })
      .from(runs)
      .where(inArray(runs.id, ids))
      .all()
      .map((r) => [r.id, r.x]),
  );
  const get = (id: string | null) => (id ? (stored.get(id) ?? null) : null);
  return orderChanges(pairs.flatMap((p) => diffExpectations(p.analysis, get(p.fromRunId), get(p.toRunId))));
}
