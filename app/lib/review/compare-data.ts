/**
 * What the compare page and GET /api/compare… send: per matched analysis of two
 * commits, the summaries (probes first, then nodes, devices and rails by kind),
 * one page of a kind's entities sorted by change, the probe series of both
 * runs for the overlay plots, and for Monte Carlo runs the distributions with
 * the two-sample Kolmogorov–Smirnov test.
 *
 * Functions take already-authorised commit ids. A comparison of two runs is
 * computed once per tolerance and kept in a small in-process cache (runs that
 * are done never change, so an entry never goes stale). Routes and pages call
 * `prepareComparisons` first: it computes what the cache lacks in the
 * interactive pool (app/lib/interactive.ts), so a first visit of a 1,000-point
 * sweep pair (seconds of work) does not hold the request thread; the
 * synchronous functions below then find their comparison in the cache.
 */
import { db } from "@/db";
import type { Q } from "@/db";
import { eq } from "drizzle-orm";
import { commits, runs } from "@/db/schema";
import { compareInWorker } from "../interactive";
import { compareInRunPool } from "../run-pool";
import { DEFAULT_TOLERANCE, type Quantity, type Tolerance, type ValueKind } from "./results-diff";
import { latestDoneRuns, probeColumns, runSource, storedPointKey } from "./run-tables";
import {
  ksTwoSample,
  finiteSorted,
  sharedHistogram,
  summarizeSample,
  type KsResult,
  type SampleSummary,
} from "./stats";
import {
  compareRuns,
  entityPage,
  entityRow,
  kindSummaries,
  paramUnit,
  type AnalysisComparison,
  type EntityPage,
  type EntityRow,
  type EntitySort,
  type KindSummary,
} from "./sweep-compare";
import { processShared } from "../process-shared";

const CACHE_SIZE = 8;
const cache = processShared("compare-data.cache", () => new Map<string, AnalysisComparison>());

function cacheKey(fromRunId: string, toRunId: string, tol: Tolerance): string {
  return `${fromRunId}>${toRunId}|${tol.rel},${tol.absCurrent},${tol.absVoltage},${tol.absProbe},${tol.absIc}`;
}

function remember(key: string, c: AnalysisComparison): void {
  if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
  cache.set(key, c);
}

/** Comparisons being computed in the pool, by cache key (two visitors of a new pair share one computation). */
const pending = processShared("compare-data.pending", () => new Map<string, Promise<void>>());

/**
 * Computes, off the request thread, the comparison of every analysis of two commits that the cache lacks under
 * `tolerance` (the compare page, GET /api/compare, /entities and /series call it before the functions below).
 */
export async function prepareComparisons(
  fromCommitId: string,
  toCommitId: string,
  tolerance: Partial<Tolerance> = {},
  d: Q = db(),
  compute: typeof compareInWorker = compareInWorker,
): Promise<void> {
  const tol = { ...DEFAULT_TOLERANCE, ...tolerance };
  const work: Promise<void>[] = [];
  for (const p of pairedRuns(fromCommitId, toCommitId, d)) {
    if (!p.fromRunId || !p.toRunId) continue;
    const { fromRunId, toRunId } = p;
    const key = cacheKey(fromRunId, toRunId, tol);
    if (cache.has(key)) continue;
    let job = pending.get(key);
    if (!job) {
      job = compute(fromRunId, toRunId, tol)
        .then((core) => {
          if (!core) return;
          // The readers of both runs are made here (cheap: the layout and the stored point numbers).
          const from = runSource(fromRunId, d);
          const to = runSource(toRunId, d);
          if (from && to) remember(key, { ...core, from, to });
        })
        .finally(() => pending.delete(key));
      pending.set(key, job);
    }
    work.push(job);
  }
  await Promise.all(work);
}

/**
 * After a run of a commit ends done: the comparison of the parent commit's runs with this commit's, under the
 * default tolerance (what the compare page opens with), computed now in the run pool (low priority) rather than
 * when the first visitor asks. A visit meanwhile shares the computation.
 */
export async function precomputeForRun(runId: string, d: Q = db()): Promise<void> {
  const row = d
    .select({ commitId: runs.commitId, parentId: commits.parentId })
    .from(runs)
    .innerJoin(commits, eq(commits.id, runs.commitId))
    .where(eq(runs.id, runId))
    .get();
  if (!row?.parentId) return;
  await prepareComparisons(row.parentId, row.commitId, DEFAULT_TOLERANCE, d, compareInRunPool);
}

/** Whether the comparison of two runs under a tolerance is computed and kept (tests). */
export function comparisonReady(fromRunId: string, toRunId: string, tolerance: Partial<Tolerance> = {}): boolean {
  return cache.has(cacheKey(fromRunId, toRunId, { ...DEFAULT_TOLERANCE, ...tolerance }));
}

/**
 * The comparison of two done runs under a tolerance, from the cache or computed here (null when a run has no
 * layout). Request handlers call `prepareComparisons` first, so the computation here serves tests and scripts.
 */
export function runComparison(
  fromRunId: string,
  toRunId: string,
  tolerance: Partial<Tolerance> = {},
  d: Q = db(),
): AnalysisComparison | null {
  const tol = { ...DEFAULT_TOLERANCE, ...tolerance };
  const key = cacheKey(fromRunId, toRunId, tol);
  const hit = cache.get(key);
  if (hit) {
    cache.delete(key);
    cache.set(key, hit);
    return hit;
  }
  const a = runSource(fromRunId, d);
  const b = runSource(toRunId, d);
  if (!a || !b) return null;
  const c = compareRuns(a, b, tol);
  remember(key, c);
  return c;
}

export type AnalysisShape = "point" | "sweep" | "mismatch";

export interface AnalysisSummary {
  analysis: string;
  fromRunId: string | null;
  toRunId: string | null;
  shape: AnalysisShape;
  /** The newer run's sweeps, outer first, with the unit of each param. */
  sweeps: { param: string; unit: string | null; values: number[] }[];
  samples: number;
  matchedPoints: number;
  addedPoints: number;
  removedPoints: number;
  /** Every probe's row, in the network's order. */
  probes: EntityRow[];
  /** Per kind and quantity (probes first). */
  kinds: KindSummary[];
  /** Why nothing was compared (one side has no finished run of the analysis). */
  note?: string;
}

function shapeOf(c: { sweeps: unknown[]; mismatch: unknown }): AnalysisShape {
  return c.mismatch ? "mismatch" : c.sweeps.length ? "sweep" : "point";
}

/** The newest done run of each analysis of both commits, paired by analysis name (the newer commit's order first). */
export function pairedRuns(fromCommitId: string, toCommitId: string, d: Q = db()) {
  const ra = latestDoneRuns(fromCommitId, d);
  const rb = latestDoneRuns(toCommitId, d);
  return [...new Set([...rb.keys(), ...ra.keys()])].map((analysis) => ({
    analysis,
    fromRunId: ra.get(analysis)?.id ?? null,
    toRunId: rb.get(analysis)?.id ?? null,
  }));
}

/** Summaries of every analysis of two commits (what the compare page paints first). */
export function analysisSummaries(
  fromCommitId: string,
  toCommitId: string,
  tolerance: Partial<Tolerance> = {},
  d: Q = db(),
): AnalysisSummary[] {
  return pairedRuns(fromCommitId, toCommitId, d).map((p) => {
    const empty = (note: string): AnalysisSummary => ({
      ...p,
      shape: "point",
      sweeps: [],
      samples: 1,
      matchedPoints: 0,
      addedPoints: 0,
      removedPoints: 0,
      probes: [],
      kinds: [],
      note,
    });
    if (!p.fromRunId) return empty("the older commit has no finished run of this analysis");
    if (!p.toRunId) return empty("the newer commit has no finished run of this analysis");
    const c = runComparison(p.fromRunId, p.toRunId, tolerance, d);
    if (!c) return empty("a run has no stored results");
    const layout = c.to.layout;
    const probeStats = c.columns.find((s) => s.kind === "probe");
    return {
      ...p,
      shape: shapeOf(layout),
      sweeps: layout.sweeps.map((s) => ({ param: s.param, unit: paramUnit(layout, s.param), values: s.values })),
      samples: layout.mismatch?.runs ?? 1,
      matchedPoints: c.pairTo.length,
      addedPoints: c.addedPoints,
      removedPoints: c.removedPoints,
      probes: probeStats ? probeStats.names.map((_, s) => entityRow(c, probeStats, s)) : [],
      kinds: kindSummaries(c),
    };
  });
}

/** One page of a kind's entities of one analysis; null when the analysis or the kind is not compared. */
export function comparisonPage(
  fromCommitId: string,
  toCommitId: string,
  analysis: string,
  kind: ValueKind,
  quantity: Quantity,
  options: {
    page?: number;
    size?: number;
    sort?: EntitySort;
    only?: boolean;
    filter?: string;
    tolerance?: Partial<Tolerance>;
  },
  d: Q = db(),
): EntityPage | null {
  const p = pairedRuns(fromCommitId, toCommitId, d).find((x) => x.analysis === analysis);
  if (!p?.fromRunId || !p.toRunId) return null;
  const c = runComparison(p.fromRunId, p.toRunId, options.tolerance, d);
  return c ? entityPage(c, kind, quantity, options) : null;
}

export interface SideSeries {
  runId: string;
  sweeps: { param: string; unit: string | null; values: number[] }[];
  samples: number;
  /** Stored point numbers, ascending (outer sweep slowest, sample fastest). */
  points: number[];
  /** Per probe, its value at each stored point (null where not finite). */
  probes: { name: string; unit: string | null; values: (number | null)[] }[];
}

export interface ProbeDistribution {
  name: string;
  unit: string | null;
  from: SampleSummary;
  to: SampleSummary;
  histogram: { edges: number[]; from: number[]; to: number[] };
  ks: KsResult | null;
}

export interface SeriesAnswer {
  analysis: string;
  shape: AnalysisShape;
  /** Every probe of the newer run, in the network's order (the series below hold only the probes asked for). */
  names: string[];
  from: SideSeries;
  to: SideSeries;
  /** Per probe, the relative change (to − from)/|from| at each of the newer run's points (null where unmatched). */
  relative: (number | null)[][];
  /** Monte Carlo only: the samples at grid point `grid` compared as distributions. */
  grid?: number;
  distributions?: ProbeDistribution[];
}

const finiteOrNull = (v: number) => (Number.isFinite(v) ? v : null);

function side(
  runId: string,
  c: AnalysisComparison,
  which: "from" | "to",
  wanted: ((name: string) => boolean) | null,
  d: Q,
): SideSeries {
  const layout = c[which].layout;
  const cols = probeColumns(runId, layout.probes.length, d);
  const shown = layout.probes.map((name, j) => ({ name, j })).filter(({ name }) => !wanted || wanted(name));
  return {
    runId,
    sweeps: layout.sweeps.map((s) => ({ param: s.param, unit: paramUnit(layout, s.param), values: s.values })),
    samples: layout.mismatch?.runs ?? 1,
    points: Array.from(cols.stored),
    probes: shown.map(({ name, j }) => ({
      name,
      unit: layout.probeUnits?.[j] ?? null,
      values: Array.from(cols.values[j], finiteOrNull),
    })),
  };
}

/**
 * Both runs' probe series of one analysis, the relative change per matched
 * point, and for Monte Carlo the distributions at grid point `grid` (default 0,
 * the first combination of the swept values). `probes` names the probes to
 * send (all when absent): a page plots a few at a time, and every probe of a
 * 1,000-point sweep of a 64-tap row is megabytes. Null when not compared.
 */
export function comparisonSeries(
  fromCommitId: string,
  toCommitId: string,
  analysis: string,
  grid = 0,
  d: Q = db(),
  probes?: string[],
): SeriesAnswer | null {
  const p = pairedRuns(fromCommitId, toCommitId, d).find((x) => x.analysis === analysis);
  if (!p?.fromRunId || !p.toRunId) return null;
  const c = runComparison(p.fromRunId, p.toRunId, {}, d);
  if (!c) return null;
  const asked = probes ? new Set(probes) : null;
  const wanted = asked ? (name: string) => asked.has(name) : null;
  const from = side(p.fromRunId, c, "from", wanted, d);
  const to = side(p.toRunId, c, "to", wanted, d);
  const fromAt = new Map(from.points.map((pt, i) => [storedPointKey(c.from.layout, pt), i]));
  const toKeys = to.points.map((pt) => storedPointKey(c.to.layout, pt));
  const relative = to.probes.map((probe) => {
    const older = from.probes.find((x) => x.name === probe.name);
    return probe.values.map((v, i) => {
      const j = fromAt.get(toKeys[i]);
      const x = j === undefined || !older ? null : older.values[j];
      if (v === null || x === null) return null;
      return x === 0 ? (v === 0 ? 0 : null) : (v - x) / Math.abs(x);
    });
  });
  const answer: SeriesAnswer = {
    analysis,
    shape: shapeOf(c.to.layout),
    names: c.to.layout.probes,
    from,
    to,
    relative,
  };
  if (answer.shape === "mismatch") {
    answer.grid = grid;
    answer.distributions = to.probes.map((probe) => {
      const older = from.probes.find((x) => x.name === probe.name);
      const pick = (s: SideSeries, values: (number | null)[]) =>
        values.filter((_, i) => Math.floor(s.points[i] / s.samples) === grid);
      const a = finiteSorted(older ? pick(from, older.values) : []);
      const b = finiteSorted(pick(to, probe.values));
      const h = sharedHistogram(a, b);
      return {
        name: probe.name,
        unit: probe.unit,
        from: summarizeSample(older ? pick(from, older.values) : []),
        to: summarizeSample(pick(to, probe.values)),
        histogram: { edges: h.edges, from: h.a, to: h.b },
        ks: ksTwoSample(a, b),
      };
    });
  }
  return answer;
}
