/**
 * A stored run as results-diff tables: reads the run's layout (app/lib/run-layouts.ts) and the typed-array
 * blobs of `run_points` (db/work-schema.ts) into column tables.
 *
 * Analysis name (the matching key between two commits' runs): "operating
 * point" without sweeps, else "sweep p1 × p2" in sweep order; with mismatch,
 * " · mismatch N×" is appended. Point key: the swept values of the grid point
 * and, with mismatch, the sample (results-diff `pointKey`).
 */
import { and, asc, desc, eq } from "drizzle-orm";
import { db } from "@/db";
import { runPoints, runs } from "@/db/schema";
import type { Q } from "@/db";
import { pointKey, type AnalysisTable, type ResultColumn } from "./results-diff";
import type { RunSource } from "./sweep-compare";
import { layoutHeads, layoutTexts, parseStoredLayout } from "../run-layouts";

/** The stored arrays of a point that the tables compare. */
const POINT_ARRAYS = {
  nodes: runPoints.nodes,
  rails: runPoints.rails,
  current: runPoints.current,
  ic: runPoints.ic,
  probes: runPoints.probes,
};

/** The parts of a run's layout (app/lib/results.ts RunLayout) this module reads. */
export interface LayoutNames {
  nodes: string[];
  devices: string[];
  rails: string[];
  probes: string[];
  params: string[];
  sweeps: { param: string; values: number[] }[];
  mismatch: { runs: number } | null;
  /** Unit symbols from the unit checker (absent in older runs): app/lib/results.ts RunLayout. */
  probeUnits?: (string | null)[];
  paramUnits?: (string | null)[];
}

export function analysisName(layout: Pick<LayoutNames, "sweeps" | "mismatch">): string {
  const base = layout.sweeps.length ? `sweep ${layout.sweeps.map((s) => s.param).join(" × ")}` : "operating point";
  return layout.mismatch ? `${base} · mismatch ${layout.mismatch.runs}×` : base;
}

/** Key of stored point `k` (outer sweep slowest, mismatch sample fastest, as the run worker stores them). */
export function storedPointKey(layout: Pick<LayoutNames, "sweeps" | "mismatch">, k: number): string {
  const samples = layout.mismatch?.runs ?? 1;
  const sample = k % samples;
  let rest = Math.floor(k / samples);
  const params: Record<string, number> = {};
  const idx = new Array<number>(layout.sweeps.length);
  for (let s = layout.sweeps.length - 1; s >= 0; s--) {
    const n = layout.sweeps[s].values.length;
    idx[s] = rest % n;
    rest = Math.floor(rest / n);
  }
  layout.sweeps.forEach((s, i) => (params[s.param] = s.values[idx[i]]));
  return pointKey(params, layout.mismatch ? sample : null);
}

function floats(b: Buffer, Kind: Float64ArrayConstructor | Float32ArrayConstructor): Float64Array | Float32Array {
  const copy = new Uint8Array(b.byteLength);
  copy.set(b);
  return new Kind(copy.buffer, 0, b.byteLength / Kind.BYTES_PER_ELEMENT);
}

/** Stored layout of a run with its names, or null before the run started. */
export function runLayout(runId: string, d: Q = db()): LayoutNames | null {
  const texts = layoutTexts(runId, d);
  return texts ? parseStoredLayout(texts) : null;
}

/**
 * The run's stored points as one analysis table; null when the run has no
 * layout yet. Points not stored (a run cut short) are simply absent.
 */
export function runTable(runId: string, d: Q = db()): AnalysisTable | null {
  const layout = runLayout(runId, d);
  if (!layout) return null;
  const rows = d
    .select({ point: runPoints.point, ...POINT_ARRAYS })
    .from(runPoints)
    .where(eq(runPoints.runId, runId))
    .orderBy(asc(runPoints.point))
    .all();
  const n = rows.length;
  const col = (kind: ResultColumn["kind"], quantity: ResultColumn["quantity"], names: string[]): ResultColumn => ({
    kind,
    quantity,
    names,
    values: new Float64Array(n * names.length),
  });
  const nodes = col("node", "voltage", layout.nodes);
  const rails = col("rail", "current", layout.rails);
  const current = col("device", "current", layout.devices);
  const ic = col("device", "ic", layout.devices);
  const probes = col("probe", "value", layout.probes);
  let anyIc = false;
  rows.forEach((r, i) => {
    nodes.values.set(floats(r.nodes, Float64Array), i * layout.nodes.length);
    rails.values.set(floats(r.rails, Float64Array), i * layout.rails.length);
    current.values.set(floats(r.current, Float64Array), i * layout.devices.length);
    probes.values.set(floats(r.probes, Float64Array), i * layout.probes.length);
    const f = floats(r.ic, Float32Array);
    for (let j = 0; j < f.length; j++) {
      ic.values[i * layout.devices.length + j] = f[j];
      if (!anyIc && Number.isFinite(f[j])) anyIc = true;
    }
  });
  const columns = [nodes, rails, current, ...(anyIc ? [ic] : []), probes];
  return { analysis: analysisName(layout), points: rows.map((r) => storedPointKey(layout, r.point)), columns };
}

export interface RunBrief {
  id: string;
  commitId: string;
  workspaceId: string;
  networkId: string;
  state: string;
  analysis: string | null;
  pointsDone: number;
  pointsTotal: number;
  createdAt: number;
}

/** The runs of a commit, newest first, with their analysis names. */
export function runsOfCommit(commitId: string, d: Q = db()): RunBrief[] {
  const rows = d
    .select()
    .from(runs)
    .where(eq(runs.commitId, commitId))
    .orderBy(desc(runs.createdAt), desc(runs.id))
    .all();
  const heads = layoutHeads(
    rows.map((r) => r.id),
    d,
  );
  return rows.map((r) => {
    const l = heads.get(r.id);
    return {
      id: r.id,
      commitId: r.commitId,
      workspaceId: r.workspaceId,
      networkId: r.networkId,
      state: r.state,
      analysis: l ? analysisName(l) : null,
      pointsDone: r.pointsDone,
      pointsTotal: r.pointsTotal,
      createdAt: r.createdAt.getTime(),
    };
  });
}

/** The newest finished ("done") run of each analysis of a commit. */
export function latestDoneRuns(commitId: string, d: Q = db()): Map<string, RunBrief> {
  const out = new Map<string, RunBrief>();
  for (const r of runsOfCommit(commitId, d))
    if (r.state === "done" && r.analysis && !out.has(r.analysis)) out.set(r.analysis, r);
  return out;
}

/** The first stored point's probe values (and, for a sweep, min and max over the points): the run card's key figures. */
export function keyProbes(
  runId: string,
  limit = 4,
  d: Q = db(),
): { name: string; unit: string | null; first: number; min: number; max: number }[] {
  const layout = runLayout(runId, d);
  if (!layout || layout.probes.length === 0) return [];
  const rows = d
    .select({ probes: runPoints.probes })
    .from(runPoints)
    .where(and(eq(runPoints.runId, runId)))
    .orderBy(asc(runPoints.point))
    .all();
  const names = layout.probes.slice(0, limit);
  return names.map((name, j) => {
    let first = NaN;
    let min = Infinity;
    let max = -Infinity;
    rows.forEach((r, i) => {
      const v = floats(r.probes, Float64Array)[j];
      if (i === 0) first = v;
      if (v < min) min = v;
      if (v > max) max = v;
    });
    return {
      name,
      unit: layout.probeUnits?.[j] ?? null,
      first,
      min: rows.length ? min : NaN,
      max: rows.length ? max : NaN,
    };
  });
}

/**
 * A stored run as a comparison source (sweep-compare.ts `RunSource`): the
 * point list is read at once, each point's blobs only when asked for, so a
 * comparison of two runs of a big grid never holds either run whole. Null
 * before the run has a layout.
 */
export function runSource(runId: string, d: Q = db()): RunSource | null {
  const layout = runLayout(runId, d);
  if (!layout) return null;
  const stored = Int32Array.from(
    d
      .select({ point: runPoints.point })
      .from(runPoints)
      .where(eq(runPoints.runId, runId))
      .orderBy(asc(runPoints.point))
      .all(),
    (r) => r.point,
  );
  const columns: RunSource["columns"] = [
    { kind: "node", quantity: "voltage", names: layout.nodes },
    { kind: "rail", quantity: "current", names: layout.rails },
    { kind: "device", quantity: "current", names: layout.devices },
    { kind: "device", quantity: "ic", names: layout.devices },
    { kind: "probe", quantity: "value", names: layout.probes },
  ];
  return {
    id: runId,
    analysis: analysisName(layout),
    layout,
    stored,
    keys: Array.from(stored, (k) => storedPointKey(layout, k)),
    columns,
    read(i) {
      const r = d
        .select(POINT_ARRAYS)
        .from(runPoints)
        .where(and(eq(runPoints.runId, runId), eq(runPoints.point, stored[i])))
        .get();
      if (!r) return columns.map((c) => new Float64Array(c.names.length).fill(NaN));
      return [
        floats(r.nodes, Float64Array),
        floats(r.rails, Float64Array),
        floats(r.current, Float64Array),
        floats(r.ic, Float32Array),
        floats(r.probes, Float64Array),
      ];
    },
  };
}

/** The probe values of every stored point of a run (small columns only), by probe: what overlays draw. */
export function probeColumns(
  runId: string,
  probes: number,
  d: Q = db(),
): { stored: Int32Array; values: Float64Array[] } {
  const rows = d
    .select({ point: runPoints.point, probes: runPoints.probes })
    .from(runPoints)
    .where(eq(runPoints.runId, runId))
    .orderBy(asc(runPoints.point))
    .all();
  const values = Array.from({ length: probes }, () => new Float64Array(rows.length));
  rows.forEach((r, i) => {
    const f = floats(r.probes, Float64Array);
    for (let j = 0; j < probes; j++) values[j][i] = j < f.length ? f[j] : NaN;
  });
  return { stored: Int32Array.from(rows, (r) => r.point), values };
}
