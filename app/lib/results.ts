/**
 * Stored results of a run: the layout (names, fixed when the run starts) and
 * one `run_points` row per solved point whose columns are typed arrays in
 * little-endian blobs (see db/work-schema.ts). Used by the run worker (writes),
 * the seed (writes, in-process) and the routes (reads).
 *
 * Why blobs per point and not a narrow (run, point, entity, value) table:
 * `npm run bench -- --only api-storage` measures both on the same data; the
 * numbers are in README.md's Performance section.
 */
import { and, asc, eq, gte, lt } from "drizzle-orm";
import type { Network } from "@/src/lang/index";
import { NFET } from "@/src/lang/index";
import { runPointExpectations, runPoints } from "@/db/schema";
import type { CheckKind } from "@/src/lang/network";
import { db, type Q } from "@/db";
import { LayoutCache } from "./layout-cache";
import {
  encodePoint,
  type NamedPoint,
  POINT_SECTIONS,
  type PointCounts,
  type PointHeader,
  type PointNames,
  sectionsFrom,
  type StoredPoint,
  valuesOf,
} from "./point-codec";
import {
  type FullLayout,
  joinedLayoutJson,
  type LayoutHead,
  layoutHead,
  layoutTexts,
  parseStoredLayout,
} from "./run-layouts";
import { processShared } from "./process-shared";
import { roundingReplacer } from "./format";

/** Names of everything a point stores, in the order of the blob columns. */
export interface RunLayout extends PointNames {
  network: string | null;
  sweeps: { param: string; values: number[]; log: boolean }[];
  mismatch: { runs: number; seed: number; avt: number } | null;
  /** Unit symbol of each probe's values, null where not known (absent in runs stored before units were kept). */
  probeUnits?: (string | null)[];
  /** Unit symbol of each of `params` ("K" for temp), null where not known (absent in older runs). */
  paramUnits?: (string | null)[];
  /** The network's expect statements, in order (absent in runs stored before expectations existed). */
  expectations?: LayoutExpectation[];
}

/** An expect statement as a run's layout names it. */
export interface LayoutExpectation {
  name: string;
  line: number;
  /** The margin's unit symbol ("V", "A", "W", "" for a ratio), null when unknown or mixed. */
  unit: string | null;
  /** A device-set check and its name pattern, or null for a condition. */
  check: { kind: CheckKind; pattern: string } | null;
}

/** Limits checked before a run is queued (POST /api/runs answers 422 with the numbers). */
export const RUN_LIMITS = {
  pointsPerRun: Number(process.env.RUNNEL_MAX_POINTS ?? 20_000),
  valuesPerRun: Number(process.env.RUNNEL_MAX_VALUES ?? 50_000_000),
};

export function layoutOf(net: Network): RunLayout {
  let types = "";
  for (let k = 0; k < net.devices.count; k++) types += net.devices.type[k] === NFET ? "n" : "p";
  return {
    network: net.name,
    nodes: net.nodes.names,
    nodeIsRail: Array.from(net.nodes.railValue, (v) => Number.isFinite(v)),
    devices: net.devices.names,
    deviceTypes: types,
    rails: net.rails.map((r) => r.name),
    probes: net.probes.map((p) => p.name),
    params: [...net.params.map((p) => p.name), "temp"],
    sweeps: net.sweeps.map((s) => ({ param: s.param, values: s.values, log: s.log })),
    mismatch: net.mismatch ? { runs: net.mismatch.runs, seed: net.mismatch.seed, avt: net.mismatch.avt } : null,
    probeUnits: net.probes.map((p) => p.unit ?? null),
    paramUnits: [...net.params.map((p) => p.unit ?? null), "K"],
    expectations: net.expectations.map((x) => ({
      name: x.name,
      line: x.line,
      unit: x.unit,
      check: x.check ? { kind: x.check.kind, pattern: x.check.pattern } : null,
    })),
  };
}

/** Element counts of the sections a point of this layout (or layout head) stores. */
export function countsOf(layout: LayoutHead | RunLayout): PointCounts {
  return {
    nodes: "nodeCount" in layout ? layout.nodeCount : layout.nodes.length,
    rails: layout.rails.length,
    probes: layout.probes.length,
    params: layout.params.length,
    devices: "deviceCount" in layout ? layout.deviceCount : layout.devices.length,
  };
}

/** Values stored per point: node voltages, rail currents, probes, params (and temp), and current, ic, saturation per device. */
export function valuesPerPoint(net: Network): number {
  return valuesOf({
    nodes: net.nodes.names.length,
    rails: net.rails.length,
    probes: net.probes.length,
    params: net.params.length + 1,
    devices: net.devices.count,
  });
}

/** The grid indices of point `k` (outer sweep first) and its mismatch sample. */
export function gridIndex(
  layout: Pick<RunLayout, "sweeps" | "mismatch">,
  k: number,
): { indices: number[]; sample: number } {
  const samples = layout.mismatch?.runs ?? 1;
  const sample = k % samples;
  let rest = Math.floor(k / samples);
  const indices = new Array<number>(layout.sweeps.length);
  for (let s = layout.sweeps.length - 1; s >= 0; s--) {
    const n = layout.sweeps[s].values.length;
    indices[s] = rest % n;
    rest = Math.floor(rest / n);
  }
  return { indices, sample };
}

function bytes(a: ArrayBufferView): Buffer {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength);
}

/** A typed array over a blob; copies only when the blob is not aligned for the element size. */
function view<T extends Float64Array | Float32Array | Uint8Array>(
  b: Buffer,
  Kind: { new (buf: ArrayBuffer, off: number, len: number): T; BYTES_PER_ELEMENT: number },
): T {
  const size = Kind.BYTES_PER_ELEMENT;
  if (b.byteOffset % size === 0) return new Kind(b.buffer as ArrayBuffer, b.byteOffset, b.byteLength / size);
  const copy = new ArrayBuffer(b.byteLength);
  new Uint8Array(copy).set(b);
  return new Kind(copy, 0, b.byteLength / size);
}

/**
 * Inserts points (one statement per point; call inside a transaction for speed). A point already stored is left
 * as it is (a chunk solved twice stores every point once). Returns how many points were new.
 */
export function insertPoints(runId: string, points: readonly StoredPoint[], d: Q = db()): number {
  let added = 0;
  for (const p of points) {
    added += d
      .insert(runPoints)
      .values({
        runId,
        point: p.point,
        sample: p.sample,
        params: bytes(p.params),
        probes: bytes(p.probes),
        method: p.method,
        iterations: p.iterations,
        residual: p.residual,
        error: p.error,
        rails: bytes(p.rails),
        nodes: bytes(p.nodes),
        current: bytes(p.current),
        ic: bytes(p.ic),
        saturated: bytes(p.saturated),
      })
      .onConflictDoNothing()
      .run().changes;
    if (p.expectations)
      d.insert(runPointExpectations)
        .values({ runId, point: p.point, passed: bytes(p.expectations.passed), margins: bytes(p.expectations.margins) })
        .onConflictDoNothing()
        .run();
  }
  return added;
}

/** A point's stored row, or undefined when it is not stored. */
function pointRow(runId: string, point: number, d: Q) {
  return d
    .select()
    .from(runPoints)
    .where(and(eq(runPoints.runId, runId), eq(runPoints.point, point)))
    .get();
}

/** One whole point, or null when it is not stored. */
export function readPoint(runId: string, point: number, d: Q = db()): StoredPoint | null {
  const r = pointRow(runId, point, d);
  if (!r) return null;
  const x = d
    .select({ passed: runPointExpectations.passed, margins: runPointExpectations.margins })
    .from(runPointExpectations)
    .where(and(eq(runPointExpectations.runId, runId), eq(runPointExpectations.point, point)))
    .get();
  return {
    point: r.point,
    sample: r.sample,
    method: r.method,
    iterations: r.iterations,
    residual: r.residual,
    error: r.error,
    ...sectionsFrom((s) => r[s.name]),
    expectations: x ? { passed: view(x.passed, Uint8Array), margins: view(x.margins, Float64Array) } : null,
  };
}

/** Per-point columns over a range of points: what probe curves, maps and histograms need. */
export interface SeriesColumns {
  point: number[];
  sample: number[];
  /** params[j][k]: param j at the k-th returned point. */
  params: number[][];
  probes: number[][];
  method: string[];
  iterations: number[];
  residual: number[];
  error: (string | null)[];
  /** passed[j][k]: expectation j at the k-th returned point: 1 holds, 0 fails, -1 not evaluated (not solved). */
  passed: number[][];
  /** margins[j][k]: its margin (NaN where there is none). */
  margins: number[][];
}

/**
 * Params, probes and solver figures of points [from, to), column by column, and the verdicts and margins of the
 * run's expectations. Reads only the small leading columns of each row, never the big blobs.
 */
export function readSeries(
  runId: string,
  layout: Pick<RunLayout, "params" | "probes" | "expectations">,
  from = 0,
  to = Number.MAX_SAFE_INTEGER,
  d: Q = db(),
): SeriesColumns {
  const rows = d
    .select({
      point: runPoints.point,
      sample: runPoints.sample,
      params: runPoints.params,
      probes: runPoints.probes,
      method: runPoints.method,
      iterations: runPoints.iterations,
      residual: runPoints.residual,
      error: runPoints.error,
    })
    .from(runPoints)
    .where(and(eq(runPoints.runId, runId), gte(runPoints.point, from), lt(runPoints.point, to)))
    .orderBy(asc(runPoints.point))
    .all();
  const out: SeriesColumns = {
    point: [],
    sample: [],
    params: layout.params.map(() => []),
    probes: layout.probes.map(() => []),
    method: [],
    iterations: [],
    residual: [],
    error: [],
    passed: (layout.expectations ?? []).map(() => []),
    margins: (layout.expectations ?? []).map(() => []),
  };
  const verdicts = out.passed.length ? expectationRows(runId, from, to, d) : null;
  let v = 0;
  for (const r of rows) {
    if (verdicts) {
      while (v < verdicts.length && verdicts[v].point < r.point) v++;
      const x = verdicts[v]?.point === r.point ? verdicts[v] : null;
      const passed = x ? view(x.passed, Uint8Array) : null;
      const margins = x ? view(x.margins, Float64Array) : null;
      for (let j = 0; j < out.passed.length; j++) {
        out.passed[j].push(passed ? passed[j] : -1);
        out.margins[j].push(margins ? margins[j] : NaN);
      }
    }
    out.point.push(r.point);
    out.sample.push(r.sample);
    const pa = view(r.params, Float64Array);
    for (let j = 0; j < out.params.length; j++) out.params[j].push(pa[j]);
    const pr = view(r.probes, Float64Array);
    for (let j = 0; j < out.probes.length; j++) out.probes[j].push(pr[j]);
    out.method.push(r.method);
    out.iterations.push(r.iterations);
    out.residual.push(r.residual);
    out.error.push(r.error);
  }
  return out;
}

/** The stored verdicts and margins of points [from, to), in point order. */
export function expectationRows(
  runId: string,
  from = 0,
  to = Number.MAX_SAFE_INTEGER,
  d: Q = db(),
): { point: number; passed: Buffer; margins: Buffer }[] {
  return d
    .select({
      point: runPointExpectations.point,
      passed: runPointExpectations.passed,
      margins: runPointExpectations.margins,
    })
    .from(runPointExpectations)
    .where(
      and(
        eq(runPointExpectations.runId, runId),
        gte(runPointExpectations.point, from),
        lt(runPointExpectations.point, to),
      ),
    )
    .orderBy(asc(runPointExpectations.point))
    .all();
}

/** JSON cannot carry NaN or ±Infinity: they become null. */
export function jsonNumbers(a: ArrayLike<number>): (number | null)[] {
  const out = new Array<number | null>(a.length);
  for (let i = 0; i < a.length; i++) out[i] = Number.isFinite(a[i]) ? a[i] : null;
  return out;
}

const layoutCache = processShared("results.layout", () => new LayoutCache<FullLayout>());
const headCache = processShared("results.head", () => new LayoutCache<LayoutHead>());

/**
 * A run's whole layout (immutable once written), with its names; null before the run started. Parsing a large
 * network's names takes seconds: where the names are not needed, use `runLayoutHead`.
 */
export function runLayout(runId: string, d: Q = db()): FullLayout | null {
  const hit = layoutCache.get(runId);
  if (hit) return hit;
  const texts = layoutTexts(runId, d);
  const layout = texts ? parseStoredLayout(texts) : null;
  if (!texts || !layout) return null;
  layoutCache.set(runId, layout, texts.names.length);
  return layout;
}

/** A run's layout without its names (params, probes, rails, sweeps, mismatch, counts); null before the run started. */
export function runLayoutHead(runId: string, d: Q = db()): LayoutHead | null {
  const hit = headCache.get(runId);
  if (hit) return hit;
  const head = layoutHead(runId, d);
  if (head) headCache.set(runId, head, 1024);
  return head;
}

/** What the run page's tables show for one point (GET /api/runs/[id]/results?view=point): lists, null for NaN. */
export type PointView = NamedPoint<(number | null)[], (number | null)[], number[], number | null>;

/** The most nodes and devices one JSON point view holds (the whole point is in the binary view and the CSV export). */
export const POINT_VIEW_LIMIT = 10_000;

/**
 * One point's tables; nodes and devices from `offset`, at most `limit` of each. `page` says what was left out
 * (so a 2,000,000-device point never becomes one 200 MB JSON answer).
 */
export function pointView(
  runId: string,
  layout: RunLayout,
  point: number,
  d: Q = db(),
  offset = 0,
  limit = POINT_VIEW_LIMIT,
): (PointView & { page?: { offset: number; limit: number; nodes: number; devices: number; note: string } }) | null {
  const p = readPoint(runId, point, d);
  if (!p) return null;
  const [from, to] = [offset, offset + limit];
  const cut = (n: number) => n > limit || offset > 0;
  const clipped = cut(layout.nodes.length) || cut(layout.devices.length);
  const range = (n: number) =>
    `${Math.min(from, n).toLocaleString("en-US")}–${Math.min(to, n).toLocaleString("en-US")}`;
  return {
    point: p.point,
    sample: p.sample,
    grid: gridIndex(layout, p.point).indices,
    params: Object.fromEntries(
      layout.params.map((name, j) => [name, Number.isFinite(p.params[j]) ? p.params[j] : null]),
    ),
    solver: { method: p.method, iterations: p.iterations, residual: p.residual },
    error: p.error,
    nodes: {
      names: layout.nodes.slice(from, to),
      isRail: layout.nodeIsRail.slice(from, to),
      voltage: jsonNumbers(p.nodes.subarray(from, to)),
    },
    devices: {
      names: layout.devices.slice(from, to),
      types: layout.deviceTypes.slice(from, to),
      current: jsonNumbers(p.current.subarray(from, to)),
      ic: jsonNumbers(p.ic.subarray(from, to)),
      saturated: Array.from(p.saturated.subarray(from, to)),
    },
    rails: { names: layout.rails, current: jsonNumbers(p.rails) },
    probes: { names: layout.probes, value: jsonNumbers(p.probes) },
    ...(clipped
      ? {
          page: {
            offset,
            limit,
            nodes: layout.nodes.length,
            devices: layout.devices.length,
            note: `this view holds nodes ${range(layout.nodes.length)} of ${layout.nodes.length.toLocaleString("en-US")} and devices ${range(layout.devices.length)} of ${layout.devices.length.toLocaleString("en-US")}; ask for more with offset= and limit= (at most ${POINT_VIEW_LIMIT.toLocaleString("en-US")}), or download the CSV export for all of them`,
          },
        }
      : {}),
  };
}

/** Per-point columns for curves, maps and histograms (GET /api/runs/[id]/results?view=series). */
export interface SeriesView {
  params: string[];
  probes: string[];
  /** Unit symbol per probe and per param (RunLayout's probeUnits and paramUnits; null where not known). */
  probeUnits: (string | null)[];
  paramUnits: (string | null)[];
  sweeps: RunLayout["sweeps"];
  mismatch: RunLayout["mismatch"];
  point: number[];
  sample: number[];
  paramValues: (number | null)[][];
  probeValues: (number | null)[][];
  method: string[];
  iterations: number[];
  residual: (number | null)[];
  error: (string | null)[];
  /** The run's expectations, and per expectation each point's verdict (1, 0, -1 not solved) and margin. */
  expectations: LayoutExpectation[];
  passed: number[][];
  margins: (number | null)[][];
}

export function seriesView(
  runId: string,
  layout: LayoutHead | RunLayout,
  from = 0,
  to = Number.MAX_SAFE_INTEGER,
  d: Q = db(),
): SeriesView {
  return seriesViewOf(layout, readSeries(runId, layout, from, to, d));
}

/** Stored points of a run, in order (export). */
export function* eachPoint(runId: string, d: Q = db()): Generator<StoredPoint> {
  const ids = d
    .select({ point: runPoints.point })
    .from(runPoints)
    .where(eq(runPoints.runId, runId))
    .orderBy(asc(runPoints.point))
    .all();
  for (const { point } of ids) {
    const p = readPoint(runId, point, d);
    if (p) yield p;
  }
}

/** One point's stored blobs in the binary form of app/lib/point-codec.ts, or null when it is not stored. */
export function pointBinary(
  runId: string,
  layout: LayoutHead | RunLayout,
  point: number,
  d: Q = db(),
): Uint8Array<ArrayBuffer> | null {
  const r = pointRow(runId, point, d);
  if (!r) return null;
  const header: PointHeader = {
    point: r.point,
    sample: r.sample,
    grid: gridIndex(layout, r.point).indices,
    method: r.method,
    iterations: r.iterations,
    residual: r.residual,
    error: r.error,
    counts: countsOf(layout),
  };
  return encodePoint(
    header,
    POINT_SECTIONS.map((s) => r[s.name]),
  );
}

/**
 * The whole series of a run as its JSON text, cached per run: stored points
 * never change, so a later request reads only the points stored since (by
 * point order; points are stored in order) and re-serialises. The run page's
 * readers poll this every few seconds while a run is live.
 */
const seriesCache = processShared(
  "results.series",
  () =>
    new Map<
      string,
      {
        columns: SeriesColumns;
        /** The SeriesView as JSON, by significant digits asked for (17: as stored), until the next new point. */
        texts: Map<number, string>;
      }
    >(),
);
const SERIES_CACHE_SIZE = 16;

/** A run's series columns, read once and kept (the points stored since the last read appended). */
function cachedSeries(runId: string, layout: LayoutHead | RunLayout, d: Q) {
  let entry = seriesCache.get(runId);
  const next = readSeries(runId, layout, entry ? entry.columns.point.length : 0, Number.MAX_SAFE_INTEGER, d);
  if (!entry) {
    if (seriesCache.size >= SERIES_CACHE_SIZE) seriesCache.delete(seriesCache.keys().next().value!);
    entry = { columns: next, texts: new Map() };
    seriesCache.set(runId, entry);
  } else if (next.point.length > 0) {
    entry.texts.clear();
    const c = entry.columns;
    c.point.push(...next.point);
    c.sample.push(...next.sample);
    c.params.forEach((col, j) => col.push(...next.params[j]));
    c.probes.forEach((col, j) => col.push(...next.probes[j]));
    c.method.push(...next.method);
    c.iterations.push(...next.iterations);
    c.residual.push(...next.residual);
    c.error.push(...next.error);
    c.passed.forEach((col, j) => {
      for (const x of next.passed[j]) col.push(x);
    });
    c.margins.forEach((col, j) => {
      for (const x of next.margins[j]) col.push(x);
    });
  }
  return entry;
}

/** A run's series (what `seriesJson` writes), from the same kept columns: the run page draws its first plot from it. */
export function cachedSeriesView(runId: string, layout: LayoutHead | RunLayout, d: Q = db()): SeriesView {
  return seriesViewOf(layout, cachedSeries(runId, layout, d).columns);
}

export function seriesJson(
  runId: string,
  layout: LayoutHead | RunLayout,
  head: Record<string, unknown>,
  d: Q = db(),
  digits?: number,
): string {
  const entry = cachedSeries(runId, layout, d);
  // Numbers at `digits` significant digits: the run page's plots and tables show 4 and ask for 7 (0.4 of the bytes).
  const key = digits === undefined ? 17 : Math.min(digits, 17);
  let text = entry.texts.get(key);
  if (text === undefined) {
    text = JSON.stringify(seriesViewOf(layout, entry.columns), key < 17 ? roundingReplacer(key) : undefined);
    entry.texts.set(key, text);
  }
  return `${JSON.stringify(head).slice(0, -1)},"series":${text}}`;
}

function seriesViewOf(layout: LayoutHead | RunLayout, c: SeriesColumns): SeriesView {
  return {
    params: layout.params,
    probes: layout.probes,
    probeUnits: layout.probeUnits ?? layout.probes.map(() => null),
    paramUnits: layout.paramUnits ?? layout.params.map((p) => (p === "temp" ? "K" : null)),
    sweeps: layout.sweeps,
    mismatch: layout.mismatch,
    point: c.point,
    sample: c.sample,
    paramValues: c.params.map(jsonNumbers),
    probeValues: c.probes.map(jsonNumbers),
    method: c.method,
    iterations: c.iterations,
    residual: jsonNumbers(c.residual),
    error: c.error,
    expectations: layout.expectations ?? [],
    passed: c.passed,
    margins: c.margins.map(jsonNumbers),
  };
}

const layoutJsonCache = processShared("results.layout-json", () => new LayoutCache<string>());

/** `{ "layout": … }` as JSON text, joined from the stored texts without parsing them; null before the run started. */
export function layoutJson(runId: string, d: Q = db()): string | null {
  const hit = layoutJsonCache.get(runId);
  if (hit) return hit;
  const texts = layoutTexts(runId, d);
  if (!texts) return null;
  const s = `{"layout":${joinedLayoutJson(texts)}}`;
  layoutJsonCache.set(runId, s, s.length);
  return s;
}
