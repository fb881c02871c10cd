/**
 * A run's expectations from its stored points, once every chunk is in (finalizeRun): the summaries of
 * src/solver/expectation-summary.ts over run_points (every point reached, solved or not) and
 * run_point_expectations (the verdicts and margins of the solved ones), and the devices whose saturation an
 * expectation governs (saturated or unsaturated checks), which the run's generic "not saturated" count leaves to it.
 */
import { and, asc, eq, gte, lt } from "drizzle-orm";
import { db, type Q } from "@/db";
import { runPoints, runs } from "@/db/schema";
import { patternRegex } from "@/src/lang/index";
import { ExpectationTally, type ExpectationSummary } from "@/src/solver/expectation-summary";
import { expectationRows, type RunLayout } from "./results";
import { type LayoutHead, layoutTexts, parseStoredLayout } from "./run-layouts";
import { flagBytes } from "./run-stats";

/** The stored summaries of a run's expectations (null: its network states none, or the run has not ended). */
export function storedExpectations(runId: string, d: Q = db()): ExpectationSummary[] | null {
  return d.select({ x: runs.expectations }).from(runs).where(eq(runs.id, runId)).get()?.x ?? null;
}

/** Points read per query (bounded memory whatever the run's size). */
const PAGE = 10_000;

/** The summaries of the run's expectations, or null when its network states none. */
export function runExpectations(
  runId: string,
  layout: Pick<RunLayout, "params" | "sweeps" | "mismatch" | "expectations">,
  pointsTotal: number,
  d: Q = db(),
): ExpectationSummary[] | null {
  const xs = layout.expectations ?? [];
  if (xs.length === 0) return null;
  const samples = layout.mismatch?.runs ?? null;
  let grid = 1;
  for (const s of layout.sweeps) grid *= s.values.length;
  const tally = new ExpectationTally(
    xs.map((x) => ({ name: x.name, line: x.line, unit: x.unit })),
    samples,
    grid,
  );
  for (let from = 0; from < pointsTotal; from += PAGE) {
    const rows = d
      .select({ point: runPoints.point, params: runPoints.params, error: runPoints.error })
      .from(runPoints)
      .where(and(eq(runPoints.runId, runId), gte(runPoints.point, from), lt(runPoints.point, from + PAGE)))
      .orderBy(asc(runPoints.point))
      .all();
    const verdicts = expectationRows(runId, from, from + PAGE, d);
    let v = 0;
    for (const r of rows) {
      while (v < verdicts.length && verdicts[v].point < r.point) v++;
      const x = r.error === null && verdicts[v]?.point === r.point ? verdicts[v] : null;
      const params = () => {
        const values = float64(r.params);
        const out: Record<string, number> = {};
        layout.params.forEach((name, j) => {
          if (Number.isFinite(values[j])) out[name] = values[j];
        });
        return out;
      };
      tally.add(
        r.point,
        x
          ? {
              passed: new Uint8Array(x.passed.buffer, x.passed.byteOffset, x.passed.byteLength),
              margins: float64(x.margins),
            }
          : null,
        params,
      );
    }
  }
  return tally.finish();
}

/** A blob of little-endian doubles as a Float64Array (copied: a blob need not be aligned). */
function float64(b: Buffer): Float64Array {
  return new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

/**
 * One bit per device of the run's layout (flagBytes bytes): set where a saturated or unsaturated check of the run's
 * network covers the device; null when none does.
 */
export function saturationCovered(runId: string, head: LayoutHead, d: Q = db()): Uint8Array | null {
  const patterns = (head.expectations ?? [])
    .filter((x) => x.check && (x.check.kind === "saturated" || x.check.kind === "unsaturated"))
    .map((x) => patternRegex(x.check!.pattern));
  if (patterns.length === 0) return null;
  // Only here are the device names read (run-layouts.ts: the names of a large network take seconds to parse).
  const texts = layoutTexts(runId, d);
  const layout = texts ? parseStoredLayout(texts) : null;
  if (!layout) return null;
  const devices = layout.devices;
  const bits = new Uint8Array(flagBytes(devices.length));
  for (let k = 0; k < devices.length; k++) if (patterns.some((re) => re.test(devices[k]))) bits[k >> 3] |= 1 << (k & 7);
  return bits;
}
