/**
 * Results diff: what moved between the results of two commits' runs.
 *
 * Inputs are column tables (typed arrays, no object per value) so a network
 * of 10^5 devices costs a handful of arrays, not 10^5 objects per point.
 *
 * Matching (the contract)
 * - analyses by `analysis` name (e.g. "operating point", "sweep vh");
 * - within an analysis, points by their key (swept param values and mismatch
 *   sample, e.g. "vh=0.45 · sample 0"); a point on one side only is listed;
 * - within a point, values by (kind, quantity, name): node voltage, rail
 *   current, device current, device inversion coefficient, probe value.
 * - names present on one side only are listed as added/removed per kind.
 *
 * Tolerance: a value pair is "within" when |to − from| ≤ abs + rel·max(|from|, |to|)
 * — the combined absolute/relative closeness test of common practice (the same
 * form as numpy.isclose, made symmetric). Defaults: rel 1e-6; abs 1e-15 A (1 fA)
 * for currents and for probes (a probe may be a current or a ratio; for a ratio
 * 1e-15 is below any meaningful change, so the relative test decides), 1e-6 V
 * (1 µV) for voltages, 1e-9 for the dimensionless inversion coefficient.
 * Two NaNs are equal; one NaN against a number is always beyond tolerance.
 */

import type { JsonPoint } from "@/src/solver/index";

export type ValueKind = "node" | "rail" | "device" | "probe";
export type Quantity = "voltage" | "current" | "ic" | "value";

/** One table of values: `values[p * names.length + j]` is name j at point p. */
export interface ResultColumn {
  kind: ValueKind;
  quantity: Quantity;
  names: string[];
  values: Float64Array;
}

export interface AnalysisTable {
  /** Analysis name, the matching key between the two sides. */
  analysis: string;
  /** One key per point, unique within the analysis (see `pointKey`). */
  points: string[];
  columns: ResultColumn[];
}

export interface Tolerance {
  rel: number;
  /** Absolute tolerance for currents, amperes. */
  absCurrent: number;
  /** Absolute tolerance for voltages, volts. */
  absVoltage: number;
  /** Absolute tolerance for probe values (in the probe's own unit). */
  absProbe: number;
  /** Absolute tolerance for inversion coefficients (dimensionless). */
  absIc: number;
}

export const DEFAULT_TOLERANCE: Tolerance = {
  rel: 1e-6,
  absCurrent: 1e-15,
  absVoltage: 1e-6,
  absProbe: 1e-15,
  absIc: 1e-9,
};

export interface DiffRow {
  analysis: string;
  point: string;
  kind: ValueKind;
  quantity: Quantity;
  name: string;
  from: number;
  to: number;
  /** to − from. */
  abs: number;
  /** (to − from) / |from|; ±Infinity when from is 0 and to is not, 0 when both are 0, NaN with a NaN. */
  rel: number;
  beyond: boolean;
}

export interface NameChanges {
  kind: ValueKind;
  added: string[];
  removed: string[];
}

export interface ResultsDiff {
  tolerance: Tolerance;
  /** Value pairs compared, and how many of them are beyond tolerance. */
  compared: number;
  beyond: number;
  /** Rows kept: every beyond row (up to `limit`), then within rows when asked (up to `limit` in all). */
  rows: DiffRow[];
  /** True when more rows existed than `limit` allowed. */
  truncated: boolean;
  analyses: { matched: string[]; added: string[]; removed: string[] };
  points: { analysis: string; added: string[]; removed: string[] }[];
  names: NameChanges[];
}

export interface DiffOptions {
  tolerance?: Partial<Tolerance>;
  /** Also keep rows within tolerance (the compare page's "show all"). Default false. */
  includeWithin?: boolean;
  /** Most rows kept (counts stay exact). Default 5000. */
  limit?: number;
}

/** The key of a point: its swept values in order, then the mismatch sample. "default" for a plain solve. */
export function pointKey(params: Readonly<Record<string, number>>, sample?: number | null): string {
  const parts = Object.entries(params).map(([k, v]) => `${k}=${formatKey(v)}`);
  if (sample !== undefined && sample !== null) parts.push(`sample ${sample}`);
  return parts.length ? parts.join(" · ") : "default";
}

const formatKey = (v: number) => (Number.isFinite(v) ? String(Number(v.toPrecision(12))) : String(v));

function absTolerance(t: Tolerance, c: ResultColumn): number {
  if (c.quantity === "voltage") return t.absVoltage;
  if (c.quantity === "current") return t.absCurrent;
  if (c.quantity === "ic") return t.absIc;
  return t.absProbe;
}

/** True when the pair is within tolerance (see the contract). */
export function within(from: number, to: number, abs: number, rel: number): boolean {
  if (Number.isNaN(from) || Number.isNaN(to)) return Number.isNaN(from) && Number.isNaN(to);
  if (from === to) return true; // also equal infinities
  return Math.abs(to - from) <= abs + rel * Math.max(Math.abs(from), Math.abs(to));
}

export function relativeChange(from: number, to: number): number {
  if (Number.isNaN(from) || Number.isNaN(to)) return NaN;
  if (from === to) return 0;
  if (from === 0) return to > 0 ? Infinity : -Infinity;
  return (to - from) / Math.abs(from);
}

const columnKey = (c: ResultColumn) => `${c.kind}/${c.quantity}`;

/** Compares `to` against `from` (the older side). Pure; never throws on well-formed tables. */
export function diffResults(from: AnalysisTable[], to: AnalysisTable[], options: DiffOptions = {}): ResultsDiff {
  const tolerance: Tolerance = { ...DEFAULT_TOLERANCE, ...options.tolerance };
  const limit = options.limit ?? 5000;
  const includeWithin = options.includeWithin ?? false;
  const beyondRows: DiffRow[] = [];
  const withinRows: DiffRow[] = [];
  let compared = 0;
  let beyond = 0;
  let truncated = false;

  const fromBy = new Map(from.map((a) => [a.analysis, a]));
  const toBy = new Map(to.map((a) => [a.analysis, a]));
  const matched = to.filter((a) => fromBy.has(a.analysis)).map((a) => a.analysis);
  const analyses = {
    matched,
    added: to.filter((a) => !fromBy.has(a.analysis)).map((a) => a.analysis),
    removed: from.filter((a) => !toBy.has(a.analysis)).map((a) => a.analysis),
  };
  const points: ResultsDiff["points"] = [];
  const nameChanges = new Map<ValueKind, { added: Set<string>; removed: Set<string> }>();
  const noteNames = (kind: ValueKind, added: string[], removed: string[]) => {
    if (!added.length && !removed.length) return;
    let n = nameChanges.get(kind);
    if (!n) nameChanges.set(kind, (n = { added: new Set(), removed: new Set() }));
    added.forEach((x) => n.added.add(x));
    removed.forEach((x) => n.removed.add(x));
  };

  for (const name of matched) {
    const a = fromBy.get(name)!;
    const b = toBy.get(name)!;
    const aPoint = new Map(a.points.map((k, i) => [k, i]));
    const bPoint = new Map(b.points.map((k, i) => [k, i]));
    const addedPoints = b.points.filter((k) => !aPoint.has(k));
    const removedPoints = a.points.filter((k) => !bPoint.has(k));
    if (addedPoints.length || removedPoints.length)
      points.push({ analysis: name, added: addedPoints, removed: removedPoints });
    const pairs: [number, number, string][] = [];
    b.points.forEach((k, bi) => {
      const ai = aPoint.get(k);
      if (ai !== undefined) pairs.push([ai, bi, k]);
    });

    const aCols = new Map(a.columns.map((c) => [columnKey(c), c]));
    for (const cb of b.columns) {
      const ca = aCols.get(columnKey(cb));
      if (!ca) {
        noteNames(cb.kind, cb.names, []);
        continue;
      }
      const aIndex = new Map(ca.names.map((n, j) => [n, j]));
      const bIndex = new Map(cb.names.map((n, j) => [n, j]));
      noteNames(
        cb.kind,
        cb.names.filter((n) => !aIndex.has(n)),
        ca.names.filter((n) => !bIndex.has(n)),
      );
      // Shared names as two parallel index arrays, so the inner loop touches typed arrays only.
      const shared = cb.names.filter((n) => aIndex.has(n));
      const ja = Int32Array.from(shared, (n) => aIndex.get(n)!);
      const jb = Int32Array.from(shared, (n) => bIndex.get(n)!);
      const abs = absTolerance(tolerance, cb);
      const wa = ca.names.length;
      const wb = cb.names.length;
      for (const [pa, pb, key] of pairs) {
        for (let s = 0; s < shared.length; s++) {
          const x = ca.values[pa * wa + ja[s]];
          const y = cb.values[pb * wb + jb[s]];
          compared++;
          const ok = within(x, y, abs, tolerance.rel);
          if (!ok) beyond++;
          const keep = ok ? includeWithin : true;
          if (!keep) continue;
          if (beyondRows.length + (includeWithin ? withinRows.length : 0) >= limit) {
            truncated = true;
            continue;
          }
          const row: DiffRow = {
            analysis: name,
            point: key,
            kind: cb.kind,
            quantity: cb.quantity,
            name: shared[s],
            from: x,
            to: y,
            abs: y - x,
            rel: relativeChange(x, y),
            beyond: !ok,
          };
          (ok ? withinRows : beyondRows).push(row);
        }
      }
    }
    const bCols = new Set(b.columns.map(columnKey));
    for (const ca of a.columns) if (!bCols.has(columnKey(ca))) noteNames(ca.kind, [], ca.names);
  }

  const KINDS: ValueKind[] = ["node", "rail", "device", "probe"];
  const names = KINDS.filter((k) => nameChanges.has(k)).map((kind) => {
    const n = nameChanges.get(kind)!;
    return { kind, added: [...n.added], removed: [...n.removed] };
  });
  return { tolerance, compared, beyond, rows: [...beyondRows, ...withinRows], truncated, analyses, points, names };
}

/** What tableFromPoints reads of a point in the `runnel solve --json` shape: its values (solver figures may be absent). */
export type PointValues = Pick<JsonPoint, "params" | "nodes"> &
  Partial<Pick<JsonPoint, "rails" | "probes">> & {
    devices?: Record<string, Pick<JsonPoint["devices"][string], "current"> & { ic?: number | null }>;
    sample?: number | null;
  };

/**
 * An analysis table from points in the `runnel solve --json` shape. Names come
 * from the first point (every point of one run has the same names); a value
 * missing in a later point is NaN.
 */
export function tableFromPoints(analysis: string, pts: PointValues[]): AnalysisTable {
  const first = pts[0];
  const column = (
    kind: ValueKind,
    quantity: Quantity,
    names: string[],
    read: (p: PointValues, n: string) => number | null | undefined,
  ): ResultColumn => {
    const values = new Float64Array(pts.length * names.length);
    pts.forEach((p, i) => names.forEach((n, j) => (values[i * names.length + j] = read(p, n) ?? NaN)));
    return { kind, quantity, names, values };
  };
  const columns: ResultColumn[] = [];
  if (first) {
    columns.push(column("node", "voltage", Object.keys(first.nodes), (p, n) => p.nodes[n]));
    if (first.rails) columns.push(column("rail", "current", Object.keys(first.rails), (p, n) => p.rails?.[n]));
    if (first.devices) {
      const names = Object.keys(first.devices);
      columns.push(column("device", "current", names, (p, n) => p.devices?.[n]?.current));
      if (names.some((n) => first.devices![n].ic !== null && first.devices![n].ic !== undefined)) {
        columns.push(column("device", "ic", names, (p, n) => p.devices?.[n]?.ic));
      }
    }
    if (first.probes) columns.push(column("probe", "value", Object.keys(first.probes), (p, n) => p.probes?.[n]));
  }
  return { analysis, points: pts.map((p) => pointKey(p.params, p.sample)), columns };
}

/** A short summary for history badges: how many values moved, and the first few names. */
export function summarize(diff: ResultsDiff, top = 5): { compared: number; beyond: number; names: string[] } {
  const names: string[] = [];
  for (const r of diff.rows) {
    if (!r.beyond) continue;
    const label = r.kind === "device" && r.quantity === "ic" ? `${r.name} (ic)` : r.name;
    if (!names.includes(label)) names.push(label);
    if (names.length >= top) break;
  }
  return { compared: diff.compared, beyond: diff.beyond, names };
}
