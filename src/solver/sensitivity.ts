/**
 * Sensitivities of probes by the adjoint method, and the first-order
 * mismatch budget built on them (docs/physics.md §7 Mismatch; docs/language.md, Sensitivities).
 *
 * At a solved point the internal node voltages V satisfy F(V, θ) = 0, F the
 * current entering each internal node (KCL) and θ the device parameters.
 * A probe Q(V, I(V, θ)) then moves by
 *
 *   dQ/dθ = ∂Q/∂θ − λᵀ·∂F/∂θ,   Jᵀ·λ = ∂Q/∂V,   J = ∂F/∂V,
 *
 * one solve with Jᵀ per probe giving the derivative with respect to every
 * device at once (the adjoint method: e.g. Y. Cao, S. Li, L. Petzold,
 * R. Serban, "Adjoint sensitivity analysis for differential-algebraic
 * equations", SIAM J. Sci. Comput. 24, 2003 [memory]; for circuits a fact of the trade).
 *
 * - Linear class (docs/physics.md §3 Pseudo-voltages): F = S·(Â·û − b̂) with
 *   S = +gs (n-channel rows) or −gs (p-channel rows) and û = exp(∓(V − Vref)/U_T),
 *   so J = S·Â·D, D = dû/dV, and Jᵀλ = c is Â·μ = D⁻¹·c with μ = S·λ:
 *   one more pair of triangular solves with the run's own Cholesky factor
 *   (Â is symmetric), nothing new factored.
 * - Newton class: Jᵀ at the converged point is factored (lu.ts, the
 *   Jacobian's own column order) and solved once per probe.
 *
 * A device's current is proportional to W/L (both models, docs/physics.md §2, §4),
 * so ∂I/∂ln(W/L) = I, and a threshold shift enters where the gate does with
 * the opposite sign, so ∂I/∂VT = −∂I/∂Vg·σ… = −∂I/∂xg (device.ts form).
 *
 * A probe is an expression of the language (a closure): its partial
 * derivatives with respect to what it reads (node voltages, device and rail
 * currents) are central differences of the expression alone, at a relative
 * step of 1e-5 (truncation ≈ 1e-10 relative for smooth expressions; no solve).
 * Params: central differences through the whole solve (applyPoint), two
 * solves per param (a param may move rails, sizes, injects and settings at once).
 */

import { applyPoint, pointScope } from "../lang/point";
import { type Network, NFET } from "../lang/network";
import { type Classification, classify } from "./classify";
import { type DeviceParams, deviceCurrent, deviceParams } from "./device";
import { evaluate } from "./evaluate";
import {
  factorLinear,
  type LinearPlan,
  planLinear,
  releaseLinear,
  solvePseudo,
  solveWithFactor,
  voltagesLinear,
} from "./linear";
import { lu, luSolve } from "./lu";
import { initialGuess, jacobianAt, type NewtonPlan, planNewton, solveNewton } from "./newton";
import type { Csc } from "./sparse";

/** A solved point and the adjoint solve at it. */
export interface AdjointPoint {
  net: Network;
  method: "linear" | "newton";
  V: Float64Array;
  currents: Float64Array;
  railCurrents: Float64Array;
  P: DeviceParams;
  /** Param values of the point (what probes read). */
  params: Record<string, number>;
  /** λ (per node, rails 0) with Jᵀ·λ = c, c = ∂Q/∂V per node (rail entries ignored). */
  adjoint(c: Float64Array): Float64Array;
  /** Gives work arrays back (the linear plan's pool arrays). */
  release(): void;
}

export type SolveFailure = { ok: false; message: string };

/** Solves `net` (one point, no sweep, optional threshold offsets) and prepares its adjoint. */
export function adjointPoint(
  net: Network,
  dvt: Float64Array | null = null,
): { ok: true; point: AdjointPoint } | SolveFailure {
  const solver = new PointSolver();
  const r = solver.solve(net, dvt);
  if (!r.ok) solver.release();
  else r.point.release = () => solver.release();
  return r;
}

/**
 * Solves points of one network structure (the points of a sweep, the steps
 * of a goal-seek: applyPoint's networks share the structure), analysing it
 * once: the linear plan (ordering, symbolic analysis) or the Newton plan is
 * kept, and a Newton solve starts from the last solution. `release` gives the
 * plan's arrays back; a point's adjoint is valid until the next solve.
 */
export class PointSolver {
  private structure: unknown = null;
  private cls: Classification | null = null;
  private linear: LinearPlan | null = null;
  private newton: NewtonPlan | null = null;
  private lastV: Float64Array | null = null;

  private prepare(net: Network): Classification {
    if (this.structure !== net.devices.source || this.cls === null) {
      this.release();
      this.structure = net.devices.source;
      this.cls = classify(net);
    }
    return this.cls;
  }

  solve(net: Network, dvt: Float64Array | null = null): { ok: true; point: AdjointPoint } | SolveFailure {
    const cls = this.prepare(net);
    if (cls.problems.length > 0) return { ok: false, message: cls.problems[0].message };
    const P = deviceParams(net, dvt);
    const nn = net.nodes.names.length;
    const V = new Float64Array(nn);
    const params = pointScope(net);
    if (cls.linear) {
      const plan = (this.linear ??= planLinear(net, cls));
      const f = factorLinear(plan, net, P);
      if (!f.ok) return { ok: false, message: f.message };
      solvePseudo(plan, net);
      const v = voltagesLinear(plan, net, V);
      if (!v.ok) return { ok: false, message: v.message };
      const ev = evaluate(net, V, P);
      return {
        ok: true,
        point: {
          net,
          method: "linear",
          V,
          currents: ev.currents,
          railCurrents: ev.railCurrents,
          P,
          params,
          adjoint: (c) => linearAdjoint(plan, net, c),
          release: () => {},
        },
      };
    }
    const plan = (this.newton ??= planNewton(net));
    if (this.lastV) V.set(this.lastV);
    else initialGuess(net, V);
    let r = solveNewton(plan, net, P, V);
    if (!r.ok && this.lastV) {
      // The last solution was a poor start: begin again from the network's own guess.
      V.fill(0);
      initialGuess(net, V);
      r = solveNewton(plan, net, P, V);
    }
    if (!r.ok) return { ok: false, message: r.message };
    this.lastV = Float64Array.from(V);
    const ev = evaluate(net, V, P);
    let solveT: ((c: Float64Array) => Float64Array) | null = null;
    return {
      ok: true,
      point: {
        net,
        method: "newton",
        V,
        currents: ev.currents,
        railCurrents: ev.railCurrents,
        P,
        params,
        adjoint: (c) => (solveT ??= newtonAdjoint(plan, net, P, V))(c),
        release: () => {},
      },
    };
  }

  /** Every probe's value at the point (NaN for a probe that is not a number there). */
  probes(net: Network, dvt: Float64Array | null = null): { ok: true; probes: Record<string, number> } | SolveFailure {
    const r = this.solve(net, dvt);
    if (!r.ok) return r;
    const out: Record<string, number> = {};
    for (let i = 0; i < net.probes.length; i++) out[net.probes[i].name] = probeValue(r.point, i);
    return { ok: true, probes: out };
  }

  release(): void {
    if (this.linear) releaseLinear(this.linear);
    this.linear = null;
    this.newton = null;
    this.lastV = null;
    this.cls = null;
    this.structure = null;
  }
}

/** Â·μ = D⁻¹·c with the plan's factor, then λ = S⁻¹·μ (see the module comment). */
function linearAdjoint(plan: LinearPlan, net: Network, c: Float64Array): Float64Array {
  const { rows, nodeAt, isNAt, y } = plan;
  const ut = net.settings.ut;
  const rhs = new Float64Array(rows);
  // D = dû/dV: −û/U_T at an n-channel row, +û/U_T at a p-channel row.
  for (let k = 0; k < rows; k++) rhs[k] = ((isNAt[k] ? -ut : ut) * c[nodeAt[k]]) / y[k];
  solveWithFactor(plan, rhs);
  const gsN = Math.exp(plan.lnScale[1]);
  const gsP = Math.exp(plan.lnScale[0]);
  const lambda = new Float64Array(net.nodes.names.length);
  for (let k = 0; k < rows; k++) lambda[nodeAt[k]] = isNAt[k] ? rhs[k] / gsN : -rhs[k] / gsP;
  return lambda;
}

/** Factors Jᵀ at the converged point once; returns the per-probe solve. */
function newtonAdjoint(
  plan: NewtonPlan,
  net: Network,
  P: DeviceParams,
  V: Float64Array,
): (c: Float64Array) => Float64Array {
  const J = jacobianAt(plan, net, P, V);
  const Jt = transpose(J);
  const f = lu(Jt, plan.q);
  if (!f.ok) throw new Error(`the Jacobian is singular at the solution (column ${f.column}): no sensitivities`);
  const rows = plan.rows;
  const b = new Float64Array(rows);
  const x = new Float64Array(rows);
  const work = new Float64Array(rows);
  return (c) => {
    for (let r = 0; r < rows; r++) b[r] = c[plan.nodeOfRow[r]];
    luSolve(f.factor, b, x, work);
    const lambda = new Float64Array(net.nodes.names.length);
    for (let r = 0; r < rows; r++) lambda[plan.nodeOfRow[r]] = x[r];
    return lambda;
  };
}

function transpose(A: Csc): Csc {
  const n = A.n;
  const m = A.m;
  const ap = A.p;
  const ai = A.i;
  const ax = A.x as Float64Array;
  const nz = ap[n];
  const count = new Int32Array(m + 1);
  for (let p = 0; p < nz; p++) count[ai[p] + 1]++;
  for (let r = 0; r < m; r++) count[r + 1] += count[r];
  const tp = Int32Array.from(count);
  const next = count.subarray(0, m).slice();
  const ti = new Int32Array(nz);
  const tx = new Float64Array(nz);
  for (let j = 0; j < n; j++)
    for (let p = ap[j]; p < ap[j + 1]; p++) {
      const q = next[ai[p]]++;
      ti[q] = j;
      tx[q] = ax[p];
    }
  return { ...A, m: n, n: m, p: tp, i: ti, x: tx };
}

/** What a probe read, and ∂Q/∂(that quantity). */
interface Read {
  kind: "voltage" | "device" | "rail";
  index: number;
  slope: number;
}

/** Probe value and its partial derivatives with respect to each quantity it reads (central differences of the expression). */
export function probePartials(at: AdjointPoint, probe: number): { value: number; reads: Read[] } {
  const { net, V, currents, railCurrents, params } = at;
  const p = net.probes[probe];
  const override = { kind: "", index: -1, value: 0 };
  const seen = new Map<string, Read & { x: number }>();
  const ctx = {
    voltage: (n: number) => pick("voltage", n, V[n]),
    deviceCurrent: (d: number) => pick("device", d, currents[d]),
    injectCurrent: (j: number) => net.injects.value[j],
    railCurrent: (n: number) => pick("rail", n, railCurrents[n]),
  };
  function pick(kind: Read["kind"], index: number, x: number): number {
    const key = `${kind}:${index}`;
    if (!seen.has(key)) seen.set(key, { kind, index, slope: 0, x });
    return override.kind === kind && override.index === index ? override.value : x;
  }
  const value = p.evaluate(ctx, params, net.settings);
  for (const r of seen.values()) {
    const scale = r.kind === "voltage" ? Math.max(Math.abs(r.x), net.settings.ut) : Math.abs(r.x) || 1e-30;
    const h = 1e-5 * scale;
    override.kind = r.kind;
    override.index = r.index;
    override.value = r.x + h;
    const up = p.evaluate(ctx, params, net.settings);
    override.value = r.x - h;
    const down = p.evaluate(ctx, params, net.settings);
    override.kind = "";
    r.slope = (up - down) / (2 * h);
  }
  return { value, reads: [...seen.values()].map(({ kind, index, slope }) => ({ kind, index, slope })) };
}

export interface ProbeSensitivity {
  probe: string;
  value: number;
  /** Per device: ∂Q/∂ln(W/L) (the probe's unit; ∂ln Q/∂ln(W/L) is this over value). */
  dLnSize: Float64Array;
  /** Per device: ∂Q/∂VT, the probe's unit per volt. */
  dVt: Float64Array;
}

/**
 * Sensitivities of every probe (or those named) at a solved point: one
 * adjoint solve per probe, each giving every device's W/L and threshold derivative.
 */
export function probeSensitivities(at: AdjointPoint, names?: readonly string[]): ProbeSensitivity[] {
  const { net, V, P } = at;
  const { devices } = net;
  const m = devices.count;
  const nn = net.nodes.names.length;
  const rv = net.nodes.railValue;
  const { type, gate, source, drain, bulk } = devices;
  // Per device: ∂I/∂(V_g, V_s, V_d, V_b) in node terms, ∂I/∂VT; I itself is at.currents.
  const dg = new Float64Array(m);
  const ds = new Float64Array(m);
  const dd = new Float64Array(m);
  const dvt = new Float64Array(m);
  const four = new Float64Array(4);
  for (let d = 0; d < m; d++) {
    const sg = type[d] === NFET ? 1 : -1;
    const vb = bulk[d] >= 0 ? V[bulk[d]] : 0;
    deviceCurrent(P, d, sg * (V[gate[d]] - vb), sg * (V[source[d]] - vb), sg * (V[drain[d]] - vb), four);
    // x = σ(V − Vb): ∂I/∂V_pin = σ·∂I/∂x_pin; the bulk gets −(sum).
    dg[d] = sg * four[1];
    ds[d] = sg * four[2];
    dd[d] = sg * four[3];
    // κ(xg − VT): ∂I/∂VT = −∂I/∂xg.
    dvt[d] = -four[1];
  }
  const out: ProbeSensitivity[] = [];
  for (let pi = 0; pi < net.probes.length; pi++) {
    const name = net.probes[pi].name;
    if (names && !names.includes(name)) continue;
    const { value, reads } = probePartials(at, pi);
    // Weight of each device current in Q (direct reads and through rail currents).
    const wI = new Float64Array(m);
    const c = new Float64Array(nn);
    for (const r of reads) {
      if (r.kind === "voltage") c[r.index] += r.slope;
      else if (r.kind === "device") wI[r.index] += r.slope;
      else {
        // Rail current = −(current entering the rail node from devices) + injects (evaluate.ts).
        for (let d = 0; d < m; d++) {
          const sg = type[d] === NFET ? 1 : -1;
          if (source[d] === r.index) wI[d] -= sg * r.slope;
          if (drain[d] === r.index) wI[d] += sg * r.slope;
        }
      }
    }
    for (let d = 0; d < m; d++) {
      const w = wI[d];
      if (w === 0) continue;
      c[gate[d]] += w * dg[d];
      c[source[d]] += w * ds[d];
      c[drain[d]] += w * dd[d];
      if (bulk[d] >= 0) c[bulk[d]] -= w * (dg[d] + ds[d] + dd[d]);
    }
    for (let k = 0; k < nn; k++) if (Number.isFinite(rv[k])) c[k] = 0;
    const lambda = at.adjoint(c);
    const dLnSize = new Float64Array(m);
    const dVt = new Float64Array(m);
    const I = at.currents;
    for (let d = 0; d < m; d++) {
      const sg = type[d] === NFET ? 1 : -1;
      // F: σ·I enters the source, −σ·I the drain.
      const adj = wI[d] - sg * (lambda[source[d]] - lambda[drain[d]]);
      dLnSize[d] = adj * I[d];
      dVt[d] = adj * dvt[d];
    }
    out.push({ probe: name, value, dLnSize, dVt });
  }
  return out;
}

/** ∂Q/∂param by central differences through the whole solve (relative step 1e-6 of the param, absolute 1e-9 at 0). */
export function paramSensitivities(
  net: Network,
  names?: readonly string[],
): { param: string; value: number; probes: Record<string, number> }[] {
  const out: { param: string; value: number; probes: Record<string, number> }[] = [];
  for (const p of net.params) {
    if (names && !names.includes(p.name)) continue;
    const h = p.value === 0 ? 1e-9 : 1e-6 * Math.abs(p.value);
    const at = (v: number) => probeValues(applyPoint(net, { [p.name]: v }));
    const up = at(p.value + h);
    const down = at(p.value - h);
    const probes: Record<string, number> = {};
    for (const q of net.probes) probes[q.name] = (up[q.name] - down[q.name]) / (2 * h);
    out.push({ param: p.name, value: p.value, probes });
  }
  return out;
}

/** Every probe's value at `net`'s point (NaN when the point fails). */
export function probeValues(net: Network, dvt: Float64Array | null = null): Record<string, number> {
  const solver = new PointSolver();
  try {
    const r = solver.probes(net, dvt);
    if (r.ok) return r.probes;
    return Object.fromEntries(net.probes.map((q) => [q.name, NaN]));
  } finally {
    solver.release();
  }
}

function probeValue(at: AdjointPoint, i: number): number {
  const { net, V, currents, railCurrents, params } = at;
  try {
    const v = net.probes[i].evaluate(
      {
        voltage: (n) => V[n],
        deviceCurrent: (d) => currents[d],
        injectCurrent: (j) => net.injects.value[j],
        railCurrent: (n) => railCurrents[n],
      },
      params,
      net.settings,
    );
    return Number.isFinite(v) ? v : NaN;
  } catch {
    return NaN;
  }
}

/** Pelgrom σ(VT) per device: avt / √(W·L), W and L in µm, avt in V·µm (docs/physics.md §7 Mismatch). */
export function pelgromSigma(net: Network, avt: number): Float64Array {
  const { w, l, count } = net.devices;
  const s = new Float64Array(count);
  for (let d = 0; d < count; d++) s[d] = avt / Math.sqrt(w[d] * 1e6 * (l[d] * 1e6));
  return s;
}

export interface BudgetEntry {
  /** A device name, or a group's pattern. */
  name: string;
  /** Devices in it (1 for a device). */
  devices: number;
  /** Its part of σ², in the probe's unit squared, and its share of the total (0…1). */
  variance: number;
  share: number;
}

export interface MismatchBudget {
  probe: string;
  value: number;
  /** First-order σ of the probe: √Σ (∂Q/∂VT_i)²·σ_i². */
  sigma: number;
  /** Devices by share, largest first (at most `top`). */
  devices: BudgetEntry[];
  /** Groups by share, largest first, when patterns were given (a device counts in the first group it matches). */
  groups: BudgetEntry[];
}

/** A name pattern: `*` matches any run of characters (`lat*`, `*_out`); anything else is literal. */
export function namePattern(pattern: string): RegExp {
  const body = pattern
    .split("*")
    .map((s) => s.replace(/[.+?^${}()|[\]\\]/g, "\\$&"))
    .join(".*");
  return new RegExp(`^${body}$`);
}

/**
 * First-order mismatch budget of a probe: σ² ≈ Σ (∂Q/∂VT_i)²·σ_i² with
 * Pelgrom's σ_i (M. Pelgrom, A. Duinmaijer, A. Welbers, "Matching properties
 * of MOS transistors", IEEE JSSC 24, 1989), devices and groups ranked by their share.
 */
export function mismatchBudget(
  net: Network,
  s: ProbeSensitivity,
  avt: number,
  opts: { top?: number; groups?: readonly string[] } = {},
): MismatchBudget {
  const sig = pelgromSigma(net, avt);
  const m = net.devices.count;
  const part = new Float64Array(m);
  let total = 0;
  for (let d = 0; d < m; d++) {
    const x = s.dVt[d] * sig[d];
    part[d] = x * x;
    total += part[d];
  }
  const share = (v: number) => (total > 0 ? v / total : 0);
  const top = opts.top ?? 20;
  const idx = Array.from({ length: m }, (_, d) => d)
    .filter((d) => part[d] > 0)
    .sort((a, b) => part[b] - part[a])
    .slice(0, top);
  const names = net.devices.names;
  const devices = idx.map((d) => ({ name: names[d], devices: 1, variance: part[d], share: share(part[d]) }));
  const groups: BudgetEntry[] = [];
  if (opts.groups && opts.groups.length > 0) {
    const res = opts.groups.map(namePattern);
    const gv = new Float64Array(res.length);
    const gn = new Int32Array(res.length);
    for (let d = 0; d < m; d++) {
      const g = res.findIndex((re) => re.test(names[d]));
      if (g < 0) continue;
      gv[g] += part[d];
      gn[g]++;
    }
    opts.groups.forEach((name, g) => groups.push({ name, devices: gn[g], variance: gv[g], share: share(gv[g]) }));
    groups.sort((a, b) => b.variance - a.variance);
  }
  return { probe: s.probe, value: s.value, sigma: Math.sqrt(total), devices, groups };
}
