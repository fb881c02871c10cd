/**
 * Solves one chunk of a run — the points [start, end) of its run order — and
 * hands the stored form of its points to `onBatch` in short batches. Pure
 * (no database, no network): the local pool's threads write the batches to
 * SQLite, queue workers post them to the app.
 *
 * Contracts
 * - Every point of the range is reported once, in order, unless a stop
 *   request ends the chunk early (`stopped`), or the network cannot be solved
 *   at all (`stats.structural`, no points).
 * - A point whose residual or values are not finite is a failed point with a
 *   message (naming the rail that puts it out of range when one does): bad
 *   numbers never reach the database.
 * - A batch holds at most `batchPoints` points and about `batchBytes` bytes,
 *   and is handed over at least every `batchMs`, so writers hold the write
 *   lock briefly and progress moves.
 */
import type { Network } from "@/src/lang/index";
import type { PointResult } from "@/src/solver/results";
import { solveNetwork, type SolveOptions } from "@/src/solver/index";
import { POINT_SECTIONS, type StoredPoint } from "./point-codec";
import type { RunLayout } from "./results";
import { ChunkCollector, type ChunkStats } from "./run-stats";

/** Values of a stop request (the local pool's shared flag; a queue worker's answer from the app). */
export const STOP_NONE = 0;
export const STOP_CANCEL = 1;
export const STOP_TIME = 2;
/** Another chunk of the run failed: the run ends failed with that chunk's message. */
export const STOP_FAILED = 3;
export type StopKind = typeof STOP_NONE | typeof STOP_CANCEL | typeof STOP_TIME | typeof STOP_FAILED;

/** Test hooks, honoured only when RUNNEL_TEST_FAULTS=1 (see DEVELOPERS.md). */
export type TestFault = "throw" | "slow" | "stuck";
/** What the "slow" hook adds to every point. */
export const SLOW_FAULT_MS = 25;

export interface ChunkRange {
  start: number;
  end: number;
}

export interface ChunkOptions {
  /** Receives the chunk's points in order; the records are the caller's to keep. */
  onBatch(points: StoredPoint[]): void;
  /** Polled before each point: a stop request other than STOP_NONE ends the chunk. */
  stop(): StopKind;
  fault?: TestFault;
  now?: () => number;
  batchPoints?: number;
  batchBytes?: number;
  batchMs?: number;
}

export interface ChunkOutcome {
  stats: ChunkStats;
  flags: Uint8Array;
  /** The stop request that ended the chunk early, or STOP_NONE. */
  stopped: StopKind;
}

const BATCH_POINTS = 64;
const BATCH_BYTES = 4 << 20;
const BATCH_MS = 200;

export function solveChunk(net: Network, layout: RunLayout, range: ChunkRange, opts: ChunkOptions): ChunkOutcome {
  const now = opts.now ?? Date.now;
  const maxPoints = opts.batchPoints ?? BATCH_POINTS;
  const maxBytes = opts.batchBytes ?? BATCH_BYTES;
  const maxMs = opts.batchMs ?? BATCH_MS;
  const collector = new ChunkCollector(net.devices.count);
  let stopped: StopKind = STOP_NONE;
  let batch: StoredPoint[] = [];
  let bytes = 0;
  let last = now();
  const flush = (): void => {
    if (batch.length === 0) return;
    const b = batch;
    batch = [];
    bytes = 0;
    last = now();
    opts.onBatch(b);
  };
  // The last point seen: the guards below keep the chunk to its range even where the solver would go on.
  let lastIndex = range.start - 1;
  const options: SolveOptions = {
    range,
    keepPoints: false,
    // The point's arrays are reused by the next point: toRecord copies what the batch keeps.
    reuseArrays: true,
    shouldStop: () => {
      if (lastIndex >= range.end - 1) return true;
      if (opts.fault === "slow") sleep(SLOW_FAULT_MS);
      stopped = opts.stop();
      return stopped !== STOP_NONE;
    },
    onProgress: (done) => {
      if (opts.fault === "throw" && done >= 1) throw new Error("test fault: the solver threw at point 1");
    },
    onPoint: (p) => {
      if (p.index < range.start || p.index >= range.end) return;
      lastIndex = p.index;
      if (opts.fault === "stuck") for (const end = Date.now() + 60_000; Date.now() < end;);
      const rec = toRecord(net, layout, p);
      collector.add(p, rec.error);
      batch.push(rec);
      bytes += recordBytes(rec);
      if (batch.length >= maxPoints || bytes >= maxBytes || now() - last >= maxMs) flush();
    },
  };
  const run = solveNetwork(net, options);
  flush();
  for (const f of run.failures) if (f.point < 0) collector.refuse(f.message);
  return { stats: collector.finish(), flags: collector.flags, stopped };
}

function sleep(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

function recordBytes(r: StoredPoint): number {
  let n = 0;
  for (const s of POINT_SECTIONS) n += r[s.name].byteLength;
  return n;
}

/** The stored form of a solved point, in the layout's order (copies the point's arrays). */
export function toRecord(net: Network, layout: RunLayout, p: PointResult): StoredPoint {
  const paramNames = layout.params;
  const params = new Float64Array(paramNames.length);
  for (let j = 0; j < paramNames.length; j++) {
    const v = p.params[paramNames[j]];
    params[j] =
      v ??
      (paramNames[j] === "temp" ? net.settings.temp : (net.params.find((x) => x.name === paramNames[j])?.value ?? NaN));
  }
  const probes = new Float64Array(layout.probes.length);
  for (let j = 0; j < probes.length; j++) probes[j] = p.probes[layout.probes[j]] ?? NaN;
  const rails = new Float64Array(net.rails.length);
  for (let j = 0; j < rails.length; j++) rails[j] = p.railCurrents[net.rails[j].node];
  let error = p.ok ? null : (p.error ?? "not solved");
  const bad = notFinite(p, rails);
  if (bad) {
    const rail = railOutOfRange(net, p);
    error = rail ?? (error === null ? `the solver returned ${bad}; the point has no usable result` : error);
  }
  return {
    point: p.index,
    sample: p.sample ?? 0,
    params,
    probes,
    method: p.solver.method,
    iterations: p.solver.iterations,
    // A residual that is not finite is stored as +∞ (SQLite would store NaN as NULL).
    residual: Number.isFinite(p.solver.residual) ? p.solver.residual : Infinity,
    error,
    rails,
    nodes: p.voltages.slice(),
    current: p.currents.slice(),
    ic: Float32Array.from(p.ic),
    saturated: p.saturated.slice(),
    expectations:
      error === null && p.expectations
        ? { passed: p.expectations.passed.slice(), margins: p.expectations.margins.slice() }
        : null,
  };
}

/** What is not finite in a point's residual, voltages, currents or rail currents; null when all are finite. */
function notFinite(p: PointResult, rails: Float64Array): string | null {
  if (!Number.isFinite(p.solver.residual)) return `a KCL residual of ${p.solver.residual}`;
  if (!p.ok) return null;
  const arrays: [string, ArrayLike<number>][] = [
    ["node voltages", p.voltages],
    ["device currents", p.currents],
    ["rail currents", rails],
  ];
  for (const [what, a] of arrays)
    for (let k = 0; k < a.length; k++) if (!Number.isFinite(a[k])) return `${what} that are not finite`;
  return null;
}

/**
 * Channel voltages the exponential device law represents in double precision: exp(x) overflows past
 * x ≈ 709, and the solver's pseudo-voltages are exp(∓(V − Vref)/U_T) (docs/physics.md §3 Pseudo-voltages), so
 * about 700·U_T.
 */
const RANGE_UT = 700;

/**
 * The rail whose voltage puts the point beyond what the device law represents: the rail farthest from the
 * median rail voltage, when it is more than RANGE_UT·U_T from it (ties go to the larger magnitude). Null when the
 * rails lie within that range.
 */
export function railOutOfRange(net: Network, p: Pick<PointResult, "voltages">): string | null {
  const rails = net.rails.map((r) => {
    const v = p.voltages[r.node];
    return { name: r.name, v: Number.isFinite(v) ? v : net.nodes.railValue[r.node] };
  });
  if (rails.length < 2) return null;
  const sorted = rails.map((r) => r.v).sort((a, b) => a - b);
  const median = sorted[(sorted.length - 1) >> 1];
  let worst = rails[0];
  for (const r of rails) {
    const d = Math.abs(r.v - median);
    const w = Math.abs(worst.v - median);
    if (d > w || (d === w && Math.abs(r.v) > Math.abs(worst.v))) worst = r;
  }
  const limit = RANGE_UT * net.settings.ut;
  const distance = Math.abs(worst.v - median);
  if (!(distance > limit)) return null;
  const nearest = rails
    .filter((r) => r !== worst)
    .reduce((a, b) => (Math.abs(b.v - worst.v) < Math.abs(a.v - worst.v) ? b : a));
  return (
    `rail ${worst.name} = ${volts(worst.v)} is ${volts(Math.abs(worst.v - nearest.v))} from rail ${nearest.name} = ` +
    `${volts(nearest.v)}: the exponential device law represents at most about ${volts(limit)} (700·U_T) across a ` +
    `network in double precision, so this point has no finite operating point. Keep the rails within a few volts of each other.`
  );
}

function volts(v: number): string {
  return `${Number(v.toPrecision(6))} V`;
}
