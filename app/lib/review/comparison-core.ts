/**
 * A comparison of two done runs as a pool thread computes it and sends it back: everything of
 * `compareRuns` but the two run sources (their readers, made again where the comparison is kept). Computed by the
 * interactive pool when a visitor asks first, and by the run pool, at low priority, when a run ends
 * (app/lib/review/compare-data.ts `precomputeForRun`).
 */
import type { Q } from "@/db";
import type { Tolerance } from "./results-diff";
import { runSource } from "./run-tables";
import { compareRuns, type AnalysisComparison } from "./sweep-compare";

export type ComparisonCore = Omit<AnalysisComparison, "from" | "to">;

/** Reads both runs through `d` and compares them (seconds for a 1,000-point sweep); null when one has no layout. */
export function comparisonCore(fromRunId: string, toRunId: string, tolerance: Tolerance, d: Q): ComparisonCore | null {
  const a = runSource(fromRunId, d);
  const b = runSource(toRunId, d);
  if (!a || !b) return null;
  // eslint-disable-next-line @typescript-eslint/no-unused-vars
  const { from, to, ...core } = compareRuns(a, b, tolerance);
  return core;
}
