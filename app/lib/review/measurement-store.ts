/**
 * Bench measurements attached to a network: stored only when the whole CSV
 * parses (app/lib/review/measurements.ts), and compared with a run's curve.
 * Functions take already-authorised arguments.
 */
import { and, asc, desc, eq, type SQL } from "drizzle-orm";
import { db } from "@/db";
import { measurements, networks, runPoints, runs, users } from "@/db/schema";
import { RequestError } from "../http";
import type { Q } from "@/db";
import { newId } from "@/db/ids";
import {
  compareToSimulation,
  formatCsvError,
  parseMeasurementCsv,
  type Agreement,
  type ParseResult,
} from "./measurements";
import { runLayout, type LayoutNames } from "./run-tables";

export interface MeasurementView {
  id: string;
  networkId: string;
  workspaceId: string;
  commitId: string | null;
  name: string;
  note: string;
  x: { name: string; unit: string; dimension: string; values: number[] };
  series: { name: string; unit: string; dimension: string; values: number[] }[];
  rows: number;
  bytes: number;
  createdBy: string;
  createdAt: number;
}

/**
 * Parses and stores an uploaded CSV. Refused (422, nothing stored) when any
 * row or column is bad; the error names the first problem, `errors` lists up to 20.
 */
export function saveMeasurement(input: Parameters<typeof storeMeasurement>[0], d: Q = db()): MeasurementView {
  return getMeasurement(storeMeasurement(input, d), d)!;
}

/** Stores a measurement as `saveMeasurement` does; returns its id (nothing is read back). */
export function storeMeasurement(
  input: {
    networkId: string;
    name: string;
    note?: string;
    commitId?: string | null;
    bytes: Uint8Array;
    createdBy: string;
    /** The bytes already parsed (off the request thread, app/lib/interactive.ts); parsed here when absent. */
    parsed?: ParseResult;
  },
  d: Q = db(),
): string {
  const net = d
    .select({ id: networks.id, workspaceId: networks.workspaceId })
    .from(networks)
    .where(eq(networks.id, input.networkId))
    .get();
  if (!net) throw new RequestError(404, "network not found");
  const name = input.name.trim().slice(0, 200) || "measurement.csv";
  const parsed = input.parsed ?? parseMeasurementCsv(input.bytes);
  if (!parsed.ok) {
    throw new RequestError(422, formatCsvError(parsed.errors[0]), {
      errors: parsed.errors.map((e) => ({ ...e, text: formatCsvError(e) })),
    });
  }
  const m = parsed.measurement;
  const data = new Float64Array(m.rows * (1 + m.series.length));
  data.set(m.x.values, 0);
  m.series.forEach((s, j) => data.set(s.values, (j + 1) * m.rows));
  const id = newId("m");
  d.insert(measurements)
    .values({
      id,
      workspaceId: net.workspaceId,
      networkId: net.id,
      commitId: input.commitId ?? null,
      name,
      note: (input.note ?? "").slice(0, 2000),
      xName: m.x.name,
      xUnit: m.x.unit,
      xDimension: m.x.dimension,
      series: m.series.map((s) => ({ name: s.name, unit: s.unit, dimension: s.dimension })),
      rows: m.rows,
      data: Buffer.from(data.buffer),
      bytes: input.bytes.length,
      createdBy: input.createdBy,
    })
    .run();
  return id;
}

export function getMeasurement(id: string, d: Q = db()): MeasurementView | null {
  const r = d.select().from(measurements).where(eq(measurements.id, id)).get();
  if (!r) return null;
  const copy = new Uint8Array(r.data.byteLength);
  copy.set(r.data);
  const all = new Float64Array(copy.buffer);
  const col = (j: number) => Array.from(all.subarray(j * r.rows, (j + 1) * r.rows));
  return {
    id: r.id,
    networkId: r.networkId,
    workspaceId: r.workspaceId,
    commitId: r.commitId,
    name: r.name,
    note: r.note,
    x: { name: r.xName, unit: r.xUnit, dimension: r.xDimension, values: col(0) },
    series: r.series.map((s, j) => ({ ...s, values: col(j + 1) })),
    rows: r.rows,
    bytes: r.bytes,
    createdBy: r.createdBy,
    createdAt: r.createdAt.getTime(),
  };
}

/** Removes a measurement (nothing else refers to it). */
export function deleteMeasurement(id: string, d: Q = db()): void {
  d.delete(measurements).where(eq(measurements.id, id)).run();
}

/** One measurement as `listMeasurements` lists it (without its values); null when it does not exist. */
export function measurementSummary(id: string, d: Q = db()) {
  return measurementRows(eq(measurements.id, id), d)[0] ?? null;
}

/** The measurements of a network, newest first (without their values). */
export function listMeasurements(networkId: string, d: Q = db()) {
  return measurementRows(eq(measurements.networkId, networkId), d);
}

function measurementRows(where: SQL, d: Q) {
  return d
    .select({
      id: measurements.id,
      name: measurements.name,
      xName: measurements.xName,
      xUnit: measurements.xUnit,
      series: measurements.series,
      rows: measurements.rows,
      commitId: measurements.commitId,
      createdAt: measurements.createdAt,
      authorName: users.name,
    })
    .from(measurements)
    .innerJoin(users, eq(users.id, measurements.createdBy))
    .where(where)
    .orderBy(desc(measurements.createdAt))
    .all()
    .map((m) => ({ ...m, createdAt: m.createdAt.getTime() }));
}

export interface Overlay {
  measurementId: string;
  runId: string;
  /** The sweep param on x and the run quantity compared with each series. */
  x: { param: string; unit: string };
  series: {
    name: string;
    unit: string;
    against: string;
    measured: { x: number[]; y: number[] };
    simulated: { x: number[]; y: number[] };
    agreement: Agreement;
  }[];
}

/**
 * A measurement against a run: the run must sweep one param (the measurement's
 * x, by name unless `xParam` is given); each series is compared with the probe
 * of the same name (or `against[series]`), a node voltage or a device current
 * of that name. Mismatch samples at one sweep value are averaged.
 * 422 with a clear reason when the run and the measurement do not fit.
 */
export function overlay(
  measurementId: string,
  runId: string,
  opts: { xParam?: string; against?: Record<string, string> } = {},
  d: Q = db(),
): Overlay {
  const m = getMeasurement(measurementId, d);
  const run = d.select().from(runs).where(eq(runs.id, runId)).get();
  if (!m || !run || m.workspaceId !== run.workspaceId) throw new RequestError(404, "measurement or run not found");
  const layout = runLayout(runId, d);
  if (!layout) throw new RequestError(422, "the run has no results yet");
  if (layout.sweeps.length === 0) return profileOverlay(m, runId, layout, opts, d);
  if (layout.sweeps.length !== 1)
    throw new RequestError(
      422,
      `the run sweeps ${layout.sweeps.length} params; an overlay needs a run that sweeps one param, or an operating point with indexed probes`,
    );
  const sweep = layout.sweeps[0];
  const xParam = opts.xParam ?? m.x.name;
  if (sweep.param !== xParam)
    throw new RequestError(
      422,
      `the run sweeps ${sweep.param}, the measurement's x is ${xParam}; pick a run that sweeps ${xParam}`,
    );

  const rows = d
    .select({ point: runPoints.point, probes: runPoints.probes, nodes: runPoints.nodes, current: runPoints.current })
    .from(runPoints)
    .where(and(eq(runPoints.runId, runId)))
    .orderBy(asc(runPoints.point))
    .all();
  const f64 = (b: Buffer) => {
    const c = new Uint8Array(b.byteLength);
    c.set(b);
    return new Float64Array(c.buffer);
  };
  const samples = layout.mismatch?.runs ?? 1;
  const series = m.series.map((s) => {
    const against = opts.against?.[s.name] ?? s.name;
    const pick: { col: "probes" | "nodes" | "current"; j: number } | null =
      layout.probes.indexOf(against) >= 0
        ? { col: "probes", j: layout.probes.indexOf(against) }
        : layout.nodes.indexOf(against) >= 0
          ? { col: "nodes", j: layout.nodes.indexOf(against) }
          : layout.devices.indexOf(against) >= 0
            ? { col: "current", j: layout.devices.indexOf(against) }
            : null;
    if (!pick) throw new RequestError(422, `series ${s.name}: the run has no probe, node or device named ${against}`);
    const sum = new Float64Array(sweep.values.length);
    const count = new Uint32Array(sweep.values.length);
    for (const r of rows) {
      const g = Math.floor(r.point / samples);
      const v = f64(r[pick.col])[pick.j];
      if (Number.isFinite(v)) {
        sum[g] += v;
        count[g]++;
      }
    }
    const simX: number[] = [];
    const simY: number[] = [];
    sweep.values.forEach((x, g) => {
      if (count[g] > 0) {
        simX.push(x);
        simY.push(sum[g] / count[g]);
      }
    });
    // The curve must be monotonic in x for interpolation; sweeps are, but sort to be sure.
    const order = simX.map((_, i) => i).sort((a, b) => simX[a] - simX[b]);
    const curve = { x: order.map((i) => simX[i]), y: order.map((i) => simY[i]) };
    return {
      name: s.name,
      unit: s.unit,
      against,
      measured: { x: m.x.values, y: s.values },
      simulated: curve,
      agreement: compareToSimulation(m.x.values, s.values, curve),
    };
  });
  return { measurementId, runId, x: { param: sweep.param, unit: m.x.unit }, series };
}

/**
 * A profile: an operating-point run whose probes are indexed (`i0`, `i1`, …,
 * as a `for` loop writes them) against a measurement whose x is that index
 * (unit `1`), e.g. the output current along a row of taps. Series `i` (or
 * `against[series]`) is compared with probes `i{k}` at x = k; mismatch samples are averaged.
 */
function profileOverlay(
  m: MeasurementView,
  runId: string,
  layout: LayoutNames,
  opts: { against?: Record<string, string> },
  d: Q,
): Overlay {
  if (m.x.dimension !== "1")
    throw new RequestError(
      422,
      `the run is an operating point; its x would be a tap index, but the measurement's x (${m.x.name}) is in ${m.x.unit}; use [1] for an index column`,
    );
  const rows = d.select({ probes: runPoints.probes }).from(runPoints).where(eq(runPoints.runId, runId)).all();
  if (rows.length === 0) throw new RequestError(422, "the run has no stored points");
  const means = new Float64Array(layout.probes.length);
  for (const r of rows) {
    const c = new Uint8Array(r.probes.byteLength);
    c.set(r.probes);
    new Float64Array(c.buffer).forEach((v, j) => (means[j] += v / rows.length));
  }
  const series = m.series.map((s) => {
    const against = opts.against?.[s.name] ?? s.name;
    const pattern = new RegExp(`^${against.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}(\\d+)$`);
    const pts = layout.probes
      .map((p, j) => ({ k: pattern.exec(p)?.[1], j }))
      .filter((p) => p.k !== undefined)
      .map((p) => ({ x: Number(p.k), y: means[p.j] }))
      .sort((a, b) => a.x - b.x);
    if (pts.length < 2)
      throw new RequestError(422, `series ${s.name}: the run has no indexed probes ${against}0, ${against}1, …`);
    const curve = { x: pts.map((p) => p.x), y: pts.map((p) => p.y) };
    return {
      name: s.name,
      unit: s.unit,
      against: `${against}{k}`,
      measured: { x: m.x.values, y: s.values },
      simulated: curve,
      agreement: compareToSimulation(m.x.values, s.values, curve),
    };
  });
  return { measurementId: m.id, runId, x: { param: m.x.name, unit: m.x.unit }, series };
}
