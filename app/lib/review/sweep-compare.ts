/**
 * Sweep-aware comparison of two runs of one analysis: per-entity summaries
 * (largest |Δ|, largest relative Δ, where, how many values beyond tolerance)
 * for probes, nodes, devices and rails, a paged table of entities sorted by
 * change, and the per-probe series the overlay plots draw.
 *
 * Matching is results-diff's contract: points by key (swept values and
 * mismatch sample), values by (kind, quantity, name); tolerance by `within`.
 * Pure: the tables come in already read (compare-data.ts reads and caches them).
 *
 * Invariants
 * - `EntityStats` holds one entry per name present on both sides, in the
 *   newer run's order; `maxAbs` is the signed Δ = to − from of largest |Δ| over
 *   the matched points (NaN when no pair of finite values exists), `absAt` its
 *   pair index (−1 when none); likewise `maxRel`/`relAt` for the relative
 *   change (±Infinity when from is 0 and to is not).
 * - `beyond` counts the pairs beyond tolerance (a NaN against a number counts).
 */
import {
  DEFAULT_TOLERANCE,
  relativeChange,
  within,
  type AnalysisTable,
  type Quantity,
  type Tolerance,
  type ValueKind,
} from "./results-diff";

/** The parts of a run's layout the comparison reads (app/lib/results.ts RunLayout). */
export interface CompareLayout {
  probes: string[];
  /** Unit symbol per probe (the unit checker's), "" for a ratio, null when not known; absent in older runs. */
  probeUnits?: (string | null)[];
  params: string[];
  paramUnits?: (string | null)[];
  sweeps: { param: string; values: number[] }[];
  mismatch: { runs: number } | null;
}

/** A column of a run: what kind of value, and its names (the values come from `read`). */
export interface SourceColumn {
  kind: ValueKind;
  quantity: Quantity;
  names: string[];
}

/**
 * One run as the comparison reads it: layout, stored point numbers (ascending)
 * with their keys, its columns, and `read(i)`, the values of the i-th stored
 * point per column (one array per column, in column order). Points are read
 * one at a time, so a comparison of two big runs never holds either whole.
 */
export interface RunSource {
  id: string;
  analysis: string;
  layout: CompareLayout;
  stored: Int32Array;
  keys: string[];
  columns: SourceColumn[];
  read(i: number): ArrayLike<number>[];
}

/** A source over an in-memory table (tests, small runs). */
export function tableSource(id: string, layout: CompareLayout, table: AnalysisTable): RunSource {
  return {
    id,
    analysis: table.analysis,
    layout,
    stored: Int32Array.from(table.points, (_, i) => i),
    keys: table.points,
    columns: table.columns.map((c) => ({ kind: c.kind, quantity: c.quantity, names: c.names })),
    read: (i) => table.columns.map((c) => c.values.subarray(i * c.names.length, (i + 1) * c.names.length)),
  };
}

/** Where in the sweep a value was found: the swept values with their units, and the mismatch sample. */
export interface PointRef {
  key: string;
  /** Stored point number in the newer run. */
  point: number;
  params: { name: string; value: number; unit: string | null }[];
  sample: number | null;
}

export interface EntityRow {
  kind: ValueKind;
  quantity: Quantity;
  name: string;
  unit: string | null;
  /** Signed Δ of largest magnitude, and the two values there. */
  maxAbs: number;
  absAt: PointRef | null;
  fromAtAbs: number;
  toAtAbs: number;
  /** Signed relative change of largest magnitude. */
  maxRel: number;
  relAt: PointRef | null;
  beyond: number;
  /** Matched points compared for this entity. */
  compared: number;
}

export interface KindSummary {
  kind: ValueKind;
  quantity: Quantity;
  unit: string | null;
  entities: number;
  /** Entities with at least one value beyond tolerance. */
  moved: number;
  /** Values beyond tolerance, and values compared. */
  beyond: number;
  compared: number;
  /** The entity of largest |Δ|, and the one of largest relative Δ. */
  top: EntityRow | null;
  topRel: EntityRow | null;
}

export interface EntityStats {
  kind: ValueKind;
  quantity: Quantity;
  unit: string | null;
  names: string[];
  maxAbs: Float64Array;
  absAt: Int32Array;
  fromAtAbs: Float64Array;
  toAtAbs: Float64Array;
  maxRel: Float64Array;
  relAt: Int32Array;
  beyond: Int32Array;
}

export interface AnalysisComparison {
  analysis: string;
  from: RunSource;
  to: RunSource;
  tolerance: Tolerance;
  /** Matched point pairs: stored index in each run's table. */
  pairFrom: Int32Array;
  pairTo: Int32Array;
  addedPoints: number;
  removedPoints: number;
  columns: EntityStats[];
}

export const QUANTITY_UNIT: Record<Exclude<Quantity, "value">, string> = { voltage: "V", current: "A", ic: "" };

function absTolerance(t: Tolerance, quantity: Quantity): number {
  if (quantity === "voltage") return t.absVoltage;
  if (quantity === "current") return t.absCurrent;
  if (quantity === "ic") return t.absIc;
  return t.absProbe;
}

const colKey = (c: SourceColumn) => `${c.kind}/${c.quantity}`;

/** Compares two runs of one analysis (see the module contract). Reads each matched point of both once. */
export function compareRuns(from: RunSource, to: RunSource, tolerance: Partial<Tolerance> = {}): AnalysisComparison {
  const tol: Tolerance = { ...DEFAULT_TOLERANCE, ...tolerance };
  const fromIndex = new Map(from.keys.map((k, i) => [k, i]));
  const pa: number[] = [];
  const pb: number[] = [];
  to.keys.forEach((k, i) => {
    const j = fromIndex.get(k);
    if (j !== undefined) {
      pa.push(j);
      pb.push(i);
    }
  });
  const pairFrom = Int32Array.from(pa);
  const pairTo = Int32Array.from(pb);
  const fromCols = new Map(from.columns.map((c, k) => [colKey(c), k]));
  const plans: { ka: number; kb: number; ja: Int32Array; jb: Int32Array; abs: number; st: EntityStats }[] = [];
  to.columns.forEach((cb, kb) => {
    const ka = fromCols.get(colKey(cb));
    if (ka === undefined) return;
    const aIndex = new Map(from.columns[ka].names.map((n, j) => [n, j]));
    const bIndex = new Map(cb.names.map((n, j) => [n, j]));
    const names = cb.names.filter((n) => aIndex.has(n));
    const unit = cb.kind === "probe" ? null : QUANTITY_UNIT[cb.quantity as Exclude<Quantity, "value">];
    plans.push({
      ka,
      kb,
      ja: Int32Array.from(names, (n) => aIndex.get(n)!),
      jb: Int32Array.from(names, (n) => bIndex.get(n)!),
      abs: absTolerance(tol, cb.quantity),
      st: emptyStats(cb.kind, cb.quantity, unit, names),
    });
  });
  for (let p = 0; p < pairFrom.length; p++) {
    const va = from.read(pairFrom[p]);
    const vb = to.read(pairTo[p]);
    for (const plan of plans) accumulate(plan.st, va[plan.ka], vb[plan.kb], plan.ja, plan.jb, p, plan.abs, tol.rel);
  }
  // A device column of inversion coefficients that no run reported (NaN everywhere) says nothing: drop it.
  const columns = plans
    .map((x) => x.st)
    .filter((st) => st.quantity !== "ic" || st.absAt.some((a) => a >= 0) || st.beyond.some((b) => b > 0));
  return {
    analysis: to.analysis,
    from,
    to,
    tolerance: tol,
    pairFrom,
    pairTo,
    addedPoints: to.keys.length - pairTo.length,
    removedPoints: from.keys.length - pairFrom.length,
    columns,
  };
}

function emptyStats(kind: ValueKind, quantity: Quantity, unit: string | null, names: string[]): EntityStats {
  const n = names.length;
  return {
    kind,
    quantity,
    unit,
    names,
    maxAbs: new Float64Array(n).fill(NaN),
    absAt: new Int32Array(n).fill(-1),
    fromAtAbs: new Float64Array(n).fill(NaN),
    toAtAbs: new Float64Array(n).fill(NaN),
    maxRel: new Float64Array(n).fill(NaN),
    relAt: new Int32Array(n).fill(-1),
    beyond: new Int32Array(n),
  };
}

/** Folds pair `p` (values `va` of the older run, `vb` of the newer) into the stats. */
function accumulate(
  st: EntityStats,
  va: ArrayLike<number>,
  vb: ArrayLike<number>,
  ja: Int32Array,
  jb: Int32Array,
  p: number,
  abs: number,
  rel: number,
): void {
  for (let s = 0; s < ja.length; s++) {
    const x = va[ja[s]];
    const y = vb[jb[s]];
    if (!within(x, y, abs, rel)) st.beyond[s]++;
    const d = y - x;
    if (Number.isFinite(d)) {
      const m = st.maxAbs[s];
      if (Number.isNaN(m) || Math.abs(d) > Math.abs(m)) {
        st.maxAbs[s] = d;
        st.absAt[s] = p;
        st.fromAtAbs[s] = x;
        st.toAtAbs[s] = y;
      }
    }
    const r = relativeChange(x, y);
    if (!Number.isNaN(r)) {
      const m = st.maxRel[s];
      if (Number.isNaN(m) || Math.abs(r) > Math.abs(m)) {
        st.maxRel[s] = r;
        st.relAt[s] = p;
      }
    }
  }
}

/** The point of pair `p` in the newer run, with its swept values and units. */
export function pointRef(c: AnalysisComparison, p: number): PointRef | null {
  if (p < 0) return null;
  const i = c.pairTo[p];
  const layout = c.to.layout;
  const point = c.to.stored[i];
  const samples = layout.mismatch?.runs ?? 1;
  let rest = Math.floor(point / samples);
  const idx = new Array<number>(layout.sweeps.length);
  for (let s = layout.sweeps.length - 1; s >= 0; s--) {
    const len = layout.sweeps[s].values.length;
    idx[s] = rest % len;
    rest = Math.floor(rest / len);
  }
  return {
    key: c.to.keys[i],
    point,
    params: layout.sweeps.map((s, k) => ({ name: s.param, value: s.values[idx[k]], unit: paramUnit(layout, s.param) })),
    sample: layout.mismatch ? point % samples : null,
  };
}

/** Unit symbol of a param (the unit checker's), "K" for temp, null when not known. */
export function paramUnit(layout: Pick<CompareLayout, "params" | "paramUnits">, name: string): string | null {
  if (name === "temp") return "K";
  const j = layout.params.indexOf(name);
  return j >= 0 ? (layout.paramUnits?.[j] ?? null) : null;
}

function probeUnit(layout: CompareLayout, name: string): string | null {
  const j = layout.probes.indexOf(name);
  return j >= 0 ? (layout.probeUnits?.[j] ?? null) : null;
}

/** Entity `s` of column `st` as a row. */
export function entityRow(c: AnalysisComparison, st: EntityStats, s: number): EntityRow {
  return {
    kind: st.kind,
    quantity: st.quantity,
    name: st.names[s],
    unit: st.kind === "probe" ? probeUnit(c.to.layout, st.names[s]) : st.unit,
    maxAbs: st.maxAbs[s],
    absAt: pointRef(c, st.absAt[s]),
    fromAtAbs: st.fromAtAbs[s],
    toAtAbs: st.toAtAbs[s],
    maxRel: st.maxRel[s],
    relAt: pointRef(c, st.relAt[s]),
    beyond: st.beyond[s],
    compared: c.pairTo.length,
  };
}

/** Magnitude for sorting: NaN sorts last. */
const mag = (v: number) => (Number.isNaN(v) ? -1 : Math.abs(v));

function largest(values: Float64Array): number {
  let best = -1;
  let at = -1;
  for (let s = 0; s < values.length; s++) {
    const m = mag(values[s]);
    if (m > best) {
      best = m;
      at = s;
    }
  }
  return best < 0 ? -1 : at;
}

/** Per kind and quantity: how many entities and values moved, and the entity that moved most. Probes first. */
export function kindSummaries(c: AnalysisComparison): KindSummary[] {
  const order: ValueKind[] = ["probe", "node", "device", "rail"];
  return [...c.columns]
    .sort((a, b) => order.indexOf(a.kind) - order.indexOf(b.kind))
    .map((st) => {
      let moved = 0;
      let beyond = 0;
      for (let s = 0; s < st.names.length; s++) {
        if (st.beyond[s] > 0) moved++;
        beyond += st.beyond[s];
      }
      const top = largest(st.maxAbs);
      const topRel = largest(st.maxRel);
      return {
        kind: st.kind,
        quantity: st.quantity,
        unit: st.unit,
        entities: st.names.length,
        moved,
        beyond,
        compared: st.names.length * c.pairTo.length,
        top: top >= 0 ? entityRow(c, st, top) : null,
        topRel: topRel >= 0 ? entityRow(c, st, topRel) : null,
      };
    });
}

export type EntitySort = "abs" | "rel" | "beyond" | "name";

export interface EntityPage {
  kind: ValueKind;
  quantity: Quantity;
  total: number;
  page: number;
  size: number;
  sort: EntitySort;
  rows: EntityRow[];
}

/**
 * One page of a kind's entities, sorted server-side: by |Δ| (default), by
 * |relative Δ| or by the count beyond tolerance, largest first (NaN last), or by name.
 * `only`: only entities with a value beyond tolerance.
 */
export function entityPage(
  c: AnalysisComparison,
  kind: ValueKind,
  quantity: Quantity,
  options: { page?: number; size?: number; sort?: EntitySort; only?: boolean; filter?: string } = {},
): EntityPage | null {
  const st = c.columns.find((x) => x.kind === kind && x.quantity === quantity);
  if (!st) return null;
  const size = Math.min(500, Math.max(1, options.size ?? 50));
  const sort = options.sort ?? "abs";
  let idx = Array.from({ length: st.names.length }, (_, s) => s);
  if (options.only) idx = idx.filter((s) => st.beyond[s] > 0);
  if (options.filter) {
    const f = options.filter.toLowerCase();
    idx = idx.filter((s) => st.names[s].toLowerCase().includes(f));
  }
  const key =
    sort === "name"
      ? null
      : sort === "rel"
        ? (s: number) => mag(st.maxRel[s])
        : sort === "beyond"
          ? (s: number) => st.beyond[s]
          : (s: number) => mag(st.maxAbs[s]);
  if (key) idx.sort((a, b) => key(b) - key(a) || a - b);
  else idx.sort((a, b) => st.names[a].localeCompare(st.names[b], "en", { numeric: true }));
  const pages = Math.max(1, Math.ceil(idx.length / size));
  const page = Math.min(Math.max(0, options.page ?? 0), pages - 1);
  return {
    kind,
    quantity,
    total: idx.length,
    page,
    size,
    sort,
    rows: idx.slice(page * size, page * size + size).map((s) => entityRow(c, st, s)),
  };
}
