/**
 * What the linear and the Newton drivers share: the run's result shell, its
 * points in run order (grid point × mismatch sample, the network at each
 * point, the device constants of its sample), the result arrays a point is
 * written into, and the record of a solved point (probes, failure, progress,
 * mismatch summaries).
 *
 * Run order: point k is grid point ⌊k / N⌋ (outer sweep slowest) and sample
 * k mod N (N mismatch samples, 1 without mismatch). A run may solve only a
 * range [start, end) of it (`SolveOptions.range`); every point keeps its
 * index in the whole run.
 */

import type { Network } from "../lang/network";
import { applyPoint } from "../lang/point";
import type { Classification } from "./classify";
import { type DeviceParams, deviceParams } from "./device";
import { evaluateProbes } from "./evaluate";
import { evaluateExpectations } from "./expectations";
import { MismatchSampler, summarize } from "./mismatch";
import { type Alloc, Arena, heap } from "./pool";
import type { Evaluation, Method, PointResult, PointStorage, RunResult, RunTimings, SolverInfo } from "./results";
import type { SolveOptions } from "./sweep";

/** The points of a run in run order (outer sweep slowest); one empty point without sweeps. */
export function sweepGrid(net: Network): Record<string, number>[] {
  const sweeps = net.sweeps;
  let total = 1;
  for (const s of sweeps) total *= s.values.length;
  const out: Record<string, number>[] = [];
  for (let g = 0; g < total; g++) {
    const o: Record<string, number> = {};
    let rest = g;
    for (let k = sweeps.length - 1; k >= 0; k--) {
      const n = sweeps[k].values.length;
      o[sweeps[k].param] = sweeps[k].values[rest % n];
      rest = Math.floor(rest / n);
    }
    out.push(o);
  }
  return out;
}

/** Number of points of a run: grid points × mismatch samples. */
export function pointCount(net: Pick<Network, "sweeps" | "mismatch">): number {
  let total = net.mismatch ? net.mismatch.runs : 1;
  for (const s of net.sweeps) total *= s.values.length;
  return total;
}

/** One point of the run as a driver sees it. */
export interface PointAt {
  /** Position in the whole run. */
  index: number;
  /** Grid point and its swept values. */
  grid: number;
  overrides: Record<string, number>;
  /** Mismatch sample, or null without mismatch. */
  sample: number | null;
  /** The network at this point (params and temp applied). */
  net: Network;
  /** Every param's value at this point, plus temp when it is swept. */
  params: Record<string, number>;
  /** Before the range: solved only to rebuild state the point at the range's start inherits, not reported. */
  replay: boolean;
}

/** What a point's numeric factorisation depends on; equal keys let a point reuse it. */
export interface FactorKey {
  rails: Float64Array;
  w: Float64Array;
  l: Float64Array;
  kappa: number;
  ut: number;
  i0: number;
  sample: number | null;
  ispec: number | null;
  vt0: number | null;
}

export function factorKey(at: PointAt): FactorKey {
  const { nodes, devices, settings } = at.net;
  return {
    rails: nodes.railValue,
    w: devices.w,
    l: devices.l,
    kappa: settings.kappa,
    ut: settings.ut,
    i0: settings.i0,
    sample: at.sample,
    ispec: settings.ispec,
    vt0: settings.vt0,
  };
}

function sameArray(a: Float64Array, b: Float64Array): boolean {
  if (a === b) return true;
  if (a.length !== b.length) return false;
  for (let k = 0; k < a.length; k++) if (a[k] !== b[k] && !(Number.isNaN(a[k]) && Number.isNaN(b[k]))) return false;
  return true;
}

/** Same device constants: sizes, settings and mismatch sample. */
export function sameDeviceKey(a: FactorKey | null, b: FactorKey): boolean {
  return (
    a !== null &&
    a.kappa === b.kappa &&
    a.ut === b.ut &&
    a.i0 === b.i0 &&
    a.ispec === b.ispec &&
    a.vt0 === b.vt0 &&
    a.sample === b.sample &&
    sameArray(a.w, b.w) &&
    sameArray(a.l, b.l)
  );
}

/** Same numeric factorisation: the device constants and the rails. */
export function sameKey(a: FactorKey | null, b: FactorKey): boolean {
  return a !== null && sameDeviceKey(a, b) && sameArray(a.rails, b.rails);
}

/** How a point ended: solved, or the reason and the node it names. */
export type Outcome = { ok: true } | { ok: false; node: number; message: string };

export const SOLVED: Outcome = { ok: true };

/** The run in progress: its result shell and what its points share. */
export class Run {
  readonly result: RunResult;
  readonly timings: RunTimings;
  /** The points this run reports: [start, end) in run order. */
  readonly start: number;
  readonly end: number;
  private readonly grid: Record<string, number>[];
  private readonly samples: number;
  private readonly sampler: MismatchSampler | null;
  private readonly dvt: Float64Array | null;
  private readonly sweptTemp: boolean;
  private readonly slab: PointSlab | null;
  private readonly sharedArena: Arena | null;
  private readonly shared: { V: Float64Array; store: PointStorage } | null;
  private readonly withIc: boolean;
  private readonly probeValues: Record<string, number[]> = {};
  private P: DeviceParams | null = null;
  private pKey: FactorKey | null = null;
  private cached: { grid: number; net: Network; params: Record<string, number> } | null = null;

  constructor(
    readonly net: Network,
    readonly cls: Classification,
    readonly method: Method,
    readonly reason: string,
    readonly opts: SolveOptions,
  ) {
    const total = pointCount(net);
    this.timings = { analyseMs: 0, factorMs: 0, solveMs: 0, evaluateMs: 0 };
    this.result = {
      ok: true,
      points: [],
      solved: 0,
      total,
      classification: cls,
      method,
      reason,
      failures: [],
      summaries: [],
      stopped: false,
      timings: this.timings,
    };
    this.start = Math.max(0, Math.min(total, Math.floor(opts.range?.start ?? 0)));
    const end = Math.max(this.start, Math.min(total, Math.floor(opts.range?.end ?? total)));
    this.end = Math.min(end, this.start + (opts.maxPoints ?? Infinity));
    this.grid = sweepGrid(net);
    this.samples = net.mismatch ? net.mismatch.runs : 1;
    this.sampler = net.mismatch ? new MismatchSampler(net.mismatch, net.devices.count) : null;
    this.dvt = this.sampler ? new Float64Array(net.devices.count) : null;
    this.sweptTemp = net.sweeps.some((s) => s.param === "temp");
    const nn = net.nodes.names.length;
    const m = net.devices.count;
    // ic storage whenever ispec is set at all (a swept setting may switch it per point; unused then).
    this.withIc = net.settings.ispec !== null || net.bindings.some((b) => b.target.kind === "setting");
    const keep = opts.keepPoints !== false;
    this.slab = keep ? new PointSlab(nn, m, this.withIc) : null;
    // One set of arrays for every point when the caller asked for it (from the thread's pool, given back at the end).
    this.sharedArena = !keep && opts.reuseArrays ? new Arena() : null;
    this.shared = this.sharedArena ? pointArrays(nn, m, this.withIc, this.sharedArena) : null;
    for (const p of net.probes) this.probeValues[p.name] = [];
  }

  /** Refuses the run before any point: a structural problem (point −1). */
  refuse(message: string, node = -1): RunResult {
    this.result.ok = false;
    this.result.failures.push({ point: -1, node, message });
    return this.result;
  }

  /** The structure phase, timed as analyse; a throw refuses the run ("analysis failed"). */
  analyse<T>(plan: () => T): T | null {
    const t0 = performance.now();
    try {
      return plan();
    } catch (e) {
      this.refuse(`analysis failed: ${(e as Error).message}`);
      return null;
    } finally {
      this.timings.analyseMs += performance.now() - t0;
    }
  }

  /** Point k of the run (the network at its grid point is made once per grid point). */
  pointAt(k: number, replay = false): PointAt {
    const g = Math.floor(k / this.samples);
    const s = k - g * this.samples;
    if (!this.cached || this.cached.grid !== g) {
      const pnet = applyPoint(this.net, this.grid[g]);
      const params: Record<string, number> = {};
      for (const p of pnet.params) params[p.name] = p.value;
      if (this.sweptTemp) params.temp = pnet.settings.temp;
      this.cached = { grid: g, net: pnet, params };
    }
    const { net, params } = this.cached;
    return { index: k, grid: g, overrides: this.grid[g], sample: this.sampler ? s : null, net, params, replay };
  }

  /**
   * The points from `from` (≤ start: those before start are replayed) to the
   * range's end, in run order. Ends early, with `stopped`, when shouldStop says so.
   */
  *points(from: number): Generator<PointAt> {
    for (let k = Math.min(from, this.start); k < this.end; k++) {
      const replay = k < this.start;
      if (!replay && this.opts.shouldStop?.()) {
        this.result.stopped = true;
        return;
      }
      const at = this.pointAt(k, replay);
      yield at;
      if (!replay && at.index - at.grid * this.samples === this.samples - 1) this.summarise(at);
    }
  }

  /** The device constants of the point: sizes, settings and mismatch sample (recomputed only when they change). */
  deviceConstants(at: PointAt): DeviceParams {
    const k = factorKey(at);
    if (!this.P || !sameDeviceKey(this.pKey, k)) {
      const s = at.sample;
      this.P = deviceParams(
        at.net,
        this.sampler && this.dvt && s !== null ? this.sampler.offsets(at.net, s, this.dvt) : null,
      );
      this.pKey = k;
    }
    return this.P;
  }

  /** The arrays a point is written into: carved from a slab (kept points), shared (reuseArrays) or fresh. */
  arrays(): { V: Float64Array; store: PointStorage } {
    const nn = this.net.nodes.names.length;
    return this.slab?.next() ?? this.shared ?? pointArrays(nn, this.net.devices.count, this.withIc);
  }

  /**
   * Records a point: its probes (when solved), its result, a failure, and
   * hands it on. `since` is when its evaluation began (timed as evaluate).
   */
  record(at: PointAt, V: Float64Array, ev: Evaluation, outcome: Outcome, solver: SolverInfo, since: number): void {
    const { ok } = outcome;
    const probes = ok ? evaluateProbes(at.net, V, ev.currents, ev.railCurrents, at.params) : {};
    const { currents, ic, saturated, railCurrents } = ev;
    const expectations = ok
      ? evaluateExpectations({
          net: at.net,
          voltages: V,
          currents,
          ic,
          saturated,
          railCurrents,
          params: at.params,
          probes,
        })
      : null;
    for (const name in probes) this.probeValues[name].push(probes[name]);
    const point: PointResult = {
      index: at.index,
      params: at.params,
      sample: at.sample,
      ok,
      // The point's description only for a failed point (no string work per solved point).
      error: outcome.ok ? null : `${describePoint(at.overrides, at.sample)}${outcome.message}`,
      voltages: V,
      currents: ev.currents,
      ic: ev.ic,
      saturated: ev.saturated,
      railCurrents: ev.railCurrents,
      probes,
      expectations,
      solver,
      warnings: ok ? ev.warnings : [],
    };
    this.timings.evaluateMs += performance.now() - since;
    const r = this.result;
    if (!outcome.ok) {
      r.ok = false;
      r.failures.push({ point: at.index, node: outcome.node, message: point.error as string });
    }
    if (this.opts.keepPoints !== false) r.points.push(point);
    this.opts.onPoint?.(point);
    r.solved++;
    this.opts.onProgress?.(r.solved, this.end - this.start);
  }

  /** Per-probe statistics over the samples of a grid point, when all of them are in the range. */
  private summarise(at: PointAt): void {
    const first = at.grid * this.samples;
    const values = this.probeValues;
    const probes = this.net.probes;
    if (this.sampler && first >= this.start && probes.length > 0 && values[probes[0].name].length > 0) {
      for (const p of probes) {
        const st = summarize(values[p.name]);
        this.result.summaries.push({
          probe: p.name,
          gridPoint: at.grid,
          params: at.params,
          samples: st.n,
          mean: st.mean,
          std: st.std,
          min: st.min,
          max: st.max,
          p1: st.p1,
          p5: st.p5,
          p50: st.p50,
          p95: st.p95,
          p99: st.p99,
        });
      }
    }
    for (const name in values) values[name].length = 0;
  }

  /** Gives shared arrays back to the thread's pool. */
  close(): void {
    this.sharedArena?.release();
  }
}

function describePoint(overrides: Record<string, number>, sample: number | null): string {
  const parts = Object.entries(overrides).map(([k, v]) => `${k} = ${v}`);
  if (sample !== null) parts.push(`sample ${sample}`);
  return parts.length ? `at ${parts.join(", ")}: ` : "";
}

/** Bytes of result arrays a slab holds at most (a few points' worth; at least one point). */
const SLAB_BYTES = 1 << 22;

/**
 * Result arrays of retained points carved from shared zero-filled buffers
 * (one allocation per several points instead of five per point). Only for
 * runs that keep every point: a view keeps its whole slab alive. Every view
 * is handed out once; the evaluation and the solve write into fresh zeros,
 * as with separate allocations.
 */
class PointSlab {
  private buf: ArrayBuffer | null = null;
  private at = 0;
  private readonly bytes: number;
  constructor(
    private readonly nn: number,
    private readonly m: number,
    private readonly withIc: boolean,
  ) {
    // Float64 parts first, then the Uint8 saturation flags, padded to 8 bytes.
    this.bytes = 8 * (2 * nn + m * (withIc ? 2 : 1)) + Math.ceil(m / 8) * 8;
  }
  /** Voltages (length nn) and the evaluation's arrays of one point. */
  next(): { V: Float64Array; store: PointStorage } {
    if (!this.buf || this.at + this.bytes > this.buf.byteLength) {
      this.buf = new ArrayBuffer(Math.max(1, Math.floor(SLAB_BYTES / this.bytes)) * this.bytes);
      this.at = 0;
    }
    const { buf, nn, m } = this;
    let o = this.at;
    const V = new Float64Array(buf, o, nn);
    o += 8 * nn;
    const railCurrents = new Float64Array(buf, o, nn);
    o += 8 * nn;
    const currents = new Float64Array(buf, o, m);
    o += 8 * m;
    let ic: Float64Array | null = null;
    if (this.withIc) {
      ic = new Float64Array(buf, o, m);
      o += 8 * m;
    }
    const saturated = new Uint8Array(buf, o, m);
    this.at += this.bytes;
    return { V, store: { currents, ic, saturated, railCurrents } };
  }
}

/** Result arrays of one point (zero-filled), from alloc. */
function pointArrays(
  nn: number,
  m: number,
  withIc: boolean,
  alloc: Alloc = heap,
): { V: Float64Array; store: PointStorage } {
  return {
    V: alloc.f64(nn),
    store: {
      currents: alloc.f64(m),
      ic: withIc ? alloc.f64(m) : null,
      saturated: alloc.u8(m),
      railCurrents: alloc.f64(nn),
    },
  };
}
