/**
 * A run: every point of a network — the grid of `sweep` statements (first
 * sweep outermost, `temp` included) × mismatch samples — solved with the
 * method its classification calls for, reusing work across points:
 * - the structure (graph, ordering, symbolic analysis, Jacobian pattern) once per run;
 * - the numeric factorisation whenever a point changes only inject values
 *   (same rails, sizes, settings and mismatch sample as the last factorisation);
 * - for Newton, the previous point's solution as the start of the next.
 */

import type { Network } from "../lang/network";
import { applyPoint } from "../lang/point";
import { type Classification, classify } from "./classify";
import { type DeviceParams, deviceParams } from "./device";
import {
  factorLinear,
  type LinearOptions,
  type LinearPlan,
  planLinear,
  releaseLinear,
  solveLinear,
  solvePseudo,
  voltagesLinear,
} from "./linear";
import { evaluateLinear, evaluationProblem } from "./linear-eval";
import { MismatchSampler, summarize } from "./mismatch";
import { type Alloc, Arena, heap } from "./pool";
import { initialGuess, type NewtonPlan, planNewton, solveNewton } from "./newton";
import {
  currentScale,
  evaluate,
  type Evaluation,
  evaluateProbes,
  firstDeviceAt,
  KCL_LIMIT,
  type Method,
  type PointResult,
  type PointStorage,
  type ProbeSummary,
  type RunResult,
  type RunTimings,
  type SolverWarning,
} from "./results";

export interface SolveOptions extends LinearOptions {
  /** Called after each point with (points done, points in the run). */
  onProgress?(done: number, total: number): void;
  /** Solve at most this many points (in run order). */
  maxPoints?: number;
  /** Polled before each point; true ends the run early (`stopped`). */
  shouldStop?(): boolean;
  /** Called with each point as it is solved (also when keepPoints is false). */
  onPoint?(point: PointResult): void;
  /** Keep every point in RunResult.points (default true). */
  keepPoints?: boolean;
  /**
   * With keepPoints false: hand every point the same result arrays, overwritten
   * by the next point and reused by other runs once this one ends (onPoint must
   * copy what it keeps). Saves allocating and collecting a point's arrays
   * (e.g. 165 kB for a 64 × 64 grid) per point.
   */
  reuseArrays?: boolean;
  /** "newton" solves linear-class networks by Newton too (for cross-checks). */
  method?: "auto" | "newton";
  /** Newton: go straight to source stepping (for tests of the continuation). */
  forceContinuation?: boolean;
}

/** The sweep grid in run order (outer sweep slowest); one empty point without sweeps. */
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
export function pointCount(net: Network): number {
  let total = net.mismatch ? net.mismatch.runs : 1;
  for (const s of net.sweeps) total *= s.values.length;
  return total;
}

function sameArray(a: Float64Array, b: Float64Array): boolean {
  if (a === b) return true;
  if (a.length !== b.length) return false;
  for (let k = 0; k < a.length; k++) if (a[k] !== b[k] && !(Number.isNaN(a[k]) && Number.isNaN(b[k]))) return false;
  return true;
}

/** What the numeric factorisation depends on; equal keys let a point reuse it. */
interface FactorKey {
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

/** Same device constants: sizes, settings and mismatch sample. */
function sameDeviceKey(a: FactorKey | null, b: FactorKey): boolean {
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
function sameKey(a: FactorKey | null, b: FactorKey): boolean {
  return a !== null && sameDeviceKey(a, b) && sameArray(a.rails, b.rails);
}

/** Solves every point of `net` (see the module comment). Never throws for a bad network: failures are in the result. */
export function solveNetwork(net: Network, opts: SolveOptions = {}): RunResult {
  const timings: RunTimings = { analyseMs: 0, factorMs: 0, solveMs: 0, evaluateMs: 0 };
  const cls: Classification = classify(net);
  const forceNewton = opts.method === "newton";
  const method: Method = cls.linear && !forceNewton ? "linear" : "newton";
  const reason = cls.linear && forceNewton ? `${cls.reason} (Newton requested)` : cls.reason;
  const total = pointCount(net);
  const limit = Math.min(total, opts.maxPoints ?? Infinity);
  const keep = opts.keepPoints !== false;
  const result: RunResult = {
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
    timings,
  };
  if (cls.problems.length > 0) {
    result.ok = false;
    for (const p of cls.problems) result.failures.push({ point: -1, node: p.node, message: p.message });
    return result;
  }
  if (net.settings.model === "ekv" && (net.settings.ispec === null || net.settings.vt0 === null)) {
    result.ok = false;
    result.failures.push({ point: -1, node: -1, message: "set model = ekv needs both set ispec and set vt0" });
    return result;
  }

  const t0 = performance.now();
  let lplan: LinearPlan | null = null;
  let nplan: NewtonPlan | null = null;
  try {
    if (method === "linear") lplan = planLinear(net, cls, opts);
    else nplan = planNewton(net);
  } catch (e) {
    result.ok = false;
    result.failures.push({ point: -1, node: -1, message: `analysis failed: ${(e as Error).message}` });
    return result;
  }
  timings.analyseMs += performance.now() - t0;

  const grid = sweepGrid(net);
  const samples = net.mismatch ? net.mismatch.runs : 1;
  const sampler = net.mismatch ? new MismatchSampler(net.mismatch, net.devices.count) : null;
  const dvt = sampler ? new Float64Array(net.devices.count) : null;
  const sweptTemp = net.sweeps.some((s) => s.param === "temp");
  const nn = net.nodes.names.length;
  const kcl = new Float64Array(nn);
  // ic storage in the slab whenever ispec is set at all (a swept setting may switch it per point; unused then).
  const withIc = net.settings.ispec !== null || net.bindings.some((b) => b.target.kind === "setting");
  const slab = keep ? new PointSlab(nn, net.devices.count, withIc) : null;
  // One set of arrays for every point when the caller asked for it; else fresh ones per point.
  // (From the thread's pool, given back when the run ends: the caller copies what it keeps while onPoint runs.)
  const sharedArena = !keep && opts.reuseArrays ? new Arena() : null;
  const shared = sharedArena ? pointArrays(nn, net.devices.count, withIc, sharedArena) : null;
  let key: FactorKey | null = null;
  let pKey: FactorKey | null = null;
  let P: DeviceParams | null = null;
  let previous: Float64Array | null = null;
  const probeValues: Record<string, number[]> = {};
  for (const p of net.probes) probeValues[p.name] = [];

  let index = 0;
  try {
    outer: for (let g = 0; g < grid.length; g++) {
      const pnet = applyPoint(net, grid[g]);
      const params: Record<string, number> = {};
      for (const p of pnet.params) params[p.name] = p.value;
      if (sweptTemp) params.temp = pnet.settings.temp;
      for (const name in probeValues) probeValues[name].length = 0;
      for (let s = 0; s < samples; s++) {
        if (index >= limit) break outer;
        if (opts.shouldStop?.()) {
          result.stopped = true;
          break outer;
        }
        const sample = sampler ? s : null;
        const tf = performance.now();
        const k: FactorKey = {
          rails: pnet.nodes.railValue,
          w: pnet.devices.w,
          l: pnet.devices.l,
          kappa: pnet.settings.kappa,
          ut: pnet.settings.ut,
          i0: pnet.settings.i0,
          sample,
          ispec: pnet.settings.ispec,
          vt0: pnet.settings.vt0,
        };
        // Device constants depend on sizes, settings and the sample, not on rails or injects.
        if (!P || !sameDeviceKey(pKey, k)) {
          P = deviceParams(pnet, sampler && dvt ? sampler.offsets(pnet, s, dvt) : null);
          pKey = k;
        }
        const slot = slab ? slab.next() : (shared ?? (lplan ? pointArrays(nn, net.devices.count, withIc) : null));
        const V = slot ? slot.V : new Float64Array(nn);
        let ok = true;
        let error: string | null = null;
        let failNode = -1;
        let iterations = 1;
        let continuation = false;
        let reused = false;
        if (lplan) {
          if (sameKey(key, k) && lplan.factored) {
            reused = true;
          } else {
            const f = factorLinear(lplan, pnet, P);
            key = f.ok ? k : null;
            if (!f.ok) {
              ok = false;
              error = f.message;
              failNode = f.node;
            }
          }
          const ts = performance.now();
          timings.factorMs += ts - tf;
          // The linear solve proper (pseudo-voltages); their mapping to voltages belongs to the evaluation below.
          if (ok) solvePseudo(lplan, pnet);
          timings.solveMs += performance.now() - ts;
        } else if (nplan) {
          if (previous) V.set(previous);
          else startNewton(pnet, cls, V);
          timings.factorMs += performance.now() - tf;
          const ts = performance.now();
          let r = solveNewton(nplan, pnet, P, V, { forceContinuation: opts.forceContinuation });
          if (!r.ok && previous) {
            // The previous point's solution was a poor start: retry from the network's own start.
            startNewton(pnet, cls, V);
            const again = solveNewton(nplan, pnet, P, V, { forceContinuation: opts.forceContinuation });
            again.iterations += r.iterations;
            r = again;
          }
          iterations = r.iterations;
          if (r.ok) {
            continuation = r.continuation;
            previous = Float64Array.from(V);
          } else {
            ok = false;
            error = r.message;
            failNode = r.node;
          }
          timings.solveMs += performance.now() - ts;
        }
        const te = performance.now();
        if (lplan && ok) {
          const r = voltagesLinear(lplan, pnet, V);
          if (!r.ok) {
            ok = false;
            error = r.message;
            failNode = r.node;
          }
        }
        const ev =
          lplan && ok && slot
            ? evaluateLinear(lplan, pnet, V, slot.store)
            : evaluate(pnet, V, P, kcl, slot ? slot.store : undefined);
        if (lplan && ok) {
          // Currents out of range, or a KCL error beyond KCL_LIMIT: not a solution to report.
          const bad = evaluationProblem(lplan, pnet, ev);
          if (bad) {
            ok = false;
            error = bad.message;
            failNode = bad.node;
          }
        } else if (nplan && ok) {
          // Newton converged to the resolution of each node's voltage; say where that leaves the currents short.
          const w = accuracyWarning(pnet, ev);
          if (w) ev.warnings.push(w);
        }
        const probes = ok ? evaluateProbes(pnet, V, ev.currents, ev.railCurrents, params) : {};
        for (const name in probes) probeValues[name].push(probes[name]);
        const point: PointResult = {
          index,
          params,
          sample,
          ok,
          // The point's description only for a failed point (no string work per solved point).
          error: ok ? null : `${describePoint(grid[g], sample)}${error}`,
          voltages: V,
          currents: ev.currents,
          ic: ev.ic,
          saturated: ev.saturated,
          railCurrents: ev.railCurrents,
          probes,
          solver: {
            method,
            iterations,
            residual: ev.residual,
            reason,
            ordering: lplan ? lplan.ordering : nplan ? nplan.ordering : "amd",
            ...(nplan ? { continuation } : { reusedFactor: reused }),
          },
          warnings: ok ? ev.warnings : [],
        };
        timings.evaluateMs += performance.now() - te;
        if (!ok) {
          result.ok = false;
          result.failures.push({ point: index, node: failNode, message: point.error as string });
        }
        if (keep) result.points.push(point);
        opts.onPoint?.(point);
        index++;
        result.solved = index;
        opts.onProgress?.(index, limit);
      }
      if (sampler && net.probes.length > 0 && probeValues[net.probes[0].name].length > 0) {
        for (const p of net.probes) {
          const st = summarize(probeValues[p.name]);
          const summary: ProbeSummary = {
            probe: p.name,
            gridPoint: g,
            params,
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
          };
          result.summaries.push(summary);
        }
      }
    }
  } finally {
    if (lplan) releaseLinear(lplan);
    sharedArena?.release();
  }
  return result;
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

/**
 * A Newton point whose KCL error exceeds KCL_LIMIT of its largest current:
 * its node voltages are right to their last digits (Newton's test), but a
 * channel whose source and drain are within rounding of each other (a node
 * picovolts from a rail) has a current resolved only to that error.
 */
function accuracyWarning(net: Network, ev: Evaluation): SolverWarning | null {
  const scale = currentScale(net, ev);
  if (!(ev.residual > KCL_LIMIT * scale) || ev.worstNode < 0) return null;
  const device = Math.max(0, firstDeviceAt(net, ev.worstNode));
  const { names } = net.devices;
  const node = net.nodes.names[ev.worstNode];
  return {
    kind: "accuracy",
    device,
    count: 1,
    worst: ev.residual / scale,
    message: `${names[device]}: the KCL error at node ${node} is ${ev.residual.toExponential(2)} A (${(ev.residual / scale).toExponential(1)} of the largest current); a channel there has its source and drain within rounding of each other (a node within picovolts of a rail), so the currents at ${node} are resolved only to about that`,
  };
}

function describePoint(overrides: Record<string, number>, sample: number | null): string {
  const parts = Object.entries(overrides).map(([k, v]) => `${k} = ${v}`);
  if (sample !== null) parts.push(`sample ${sample}`);
  return parts.length ? `at ${parts.join(", ")}: ` : "";
}

/**
 * Newton's start: the weak-inversion linear solution when the network's
 * structure is in the linear class (EKV model), else rail averages.
 */
function startNewton(pnet: Network, cls: Classification, V: Float64Array): void {
  initialGuess(pnet, V);
  if (cls.reasons.length !== 1 || pnet.settings.model !== "ekv") return;
  // Only the model breaks linearity: the weak-inversion limit of EKV, I0 = ispec·exp(−κ·VT0/U_T) (PHYSICS.md §4).
  const s = pnet.settings;
  const weak: Network = {
    ...pnet,
    settings: { ...s, model: "weak", i0: (s.ispec as number) * Math.exp((-s.kappa * (s.vt0 as number)) / s.ut) },
  };
  const weakCls = classify(weak);
  if (!weakCls.linear) return;
  try {
    const plan = planLinear(weak, weakCls);
    try {
      const P = deviceParams(weak, null);
      if (!factorLinear(plan, weak, P).ok) return;
      const W = new Float64Array(V.length);
      if (solveLinear(plan, weak, W).ok) V.set(W);
    } finally {
      releaseLinear(plan);
    }
  } catch {
    // Keep the rail-average start.
  }
}
