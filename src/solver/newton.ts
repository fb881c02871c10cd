/**
 * Damped Newton solve of KCL on internal node voltages, for networks outside
 * the linear class (a gate, bulk or well on an internal node; a node joining
 * n- and p-channel devices) and for the all-region EKV model.
 *
 * F_k(V) = Σ currents entering internal node k (device equations of
 * device.ts, injects); J = ∂F/∂V is assembled into a fixed sparse pattern,
 * ordered once per run (approximate minimum degree of J + Jᵀ, nested
 * dissection from NESTED_FROM rows) and analysed once for the supernodal LU
 * of lu-supernodal.ts, which every iteration refactors numerically; when its
 * pivots inside the diagonal blocks are not acceptable, that iteration's J is
 * factored with partial pivoting over whole columns (lu.ts).
 *
 * Damping: each step δ = −J⁻¹F is scaled so that no node moves more than
 * MAX_STEP_UT thermal voltages (common practice for exponential devices).
 * Convergence: the last step moved no node more than STEP_TOL volts, AND
 * every row's KCL error is below 1e-15 A, or 1e-9 of the largest device
 * current, or within RES_ULPS ulps of that row's rounding scale (`resolved`:
 * the current moved by rounding the terminal voltages its devices read, plus
 * their forward and reverse currents weighted by their exponents' arguments,
 * plus its injects). The last lets a node picovolts from a rail converge: its
 * device's forward and reverse currents of ~1 A cancel to nanoamperes, and
 * one ulp of the node voltage moves its KCL sum by ~1e-14 A.
 * When plain Newton fails, source stepping (continuation): rails and injects
 * scaled by α from 0 (where V = 0 solves KCL exactly) to 1, each stage
 * started from the previous one. A point that does not converge is a failure
 * naming the node with the largest KCL error, never a result.
 */

import type { Network } from "../lang/network";
import { type DeviceParams, deviceCurrent, polarity } from "./device";
import { lu, type LuFactor, luSolve } from "./lu";
import { analyseLu, determinantSign, factorLu, solveLu, type SupernodalLu } from "./lu-supernodal";
import { amd, nestedDissection, type OrderingName } from "./order";
import { compressPattern, type Csc, symmetricAdjacency } from "./sparse";

const MAX_STEP_UT = 4;
const MAX_ITER = 200;
const STEP_TOL = 1e-9;
const ABS_TOL = 1e-15;
const REL_TOL = 1e-9;
/**
 * Rows from which the LU's columns go in nested-dissection order instead of
 * AMD: on a 200 × 200 mesh with a diode-connected device at every node the
 * whole solve took 9.9 s against 14.1 s (13 iterations, same answer); at
 * 2,025 rows the two were within the VM's noise.
 */
const NESTED_FROM = 4096;
/** A row's KCL error is resolved within this many ulps of its rounding scale (see `resolved`). */
const RES_ULPS = 4;

export interface NewtonPlan {
  rows: number;
  rowOf: Int32Array;
  nodeOfRow: Int32Array;
  /** Jacobian pattern (rows × rows); values refilled at every iteration. */
  J: Csc;
  /** Per device 8 slots: [source row × (g, s, d, b), drain row × (g, s, d, b)] → position in J.x, or -1. */
  slots: Int32Array;
  /** Column order for the LU, and which ordering made it. */
  q: Int32Array;
  ordering: OrderingName;
  /** The supernodal LU's analysis of J's pattern in that order (built once; every iteration refactors numerically). */
  lu: SupernodalLu;
  /** Iterations whose Jacobian the supernodal LU could not pivot inside its blocks: factored by lu.ts instead. */
  fallbacks: number;
  /** Sign of det J of the last factorisation (0: none since the current loop began). */
  detSign: number;
  F: Float64Array;
  delta: Float64Array;
  work: Float64Array;
  analyseMs: number;
}

export interface NewtonOk {
  ok: true;
  iterations: number;
  residual: number;
  continuation: boolean;
  /**
   * The solution is unstable: sign(det J) ≠ (−1)^rows, so J has an odd number
   * of eigenvalues with a positive real part (see `stability`).
   */
  unstable: boolean;
}

export interface NewtonFail {
  ok: false;
  iterations: number;
  residual: number;
  node: number;
  message: string;
}

export function planNewton(net: Network): NewtonPlan {
  const t0 = performance.now();
  const { nodes, devices } = net;
  const nn = nodes.names.length;
  const m = devices.count;
  const rowOf = new Int32Array(nn);
  let rows = 0;
  for (let k = 0; k < nn; k++) rowOf[k] = Number.isFinite(nodes.railValue[k]) ? -1 : rows++;
  const nodeOfRow = new Int32Array(rows);
  for (let k = 0; k < nn; k++) if (rowOf[k] >= 0) nodeOfRow[rowOf[k]] = k;
  const { gate, source, drain, bulk } = devices;
  // Pattern pairs: a diagonal for every row (so no column is structurally empty), then 8 per device.
  const cap = rows + 8 * m;
  const ti = new Int32Array(cap);
  const tj = new Int32Array(cap);
  let nz = 0;
  for (let r = 0; r < rows; r++) {
    ti[nz] = r;
    tj[nz++] = r;
  }
  const slotPair = new Int32Array(8 * m).fill(-1);
  for (let d = 0; d < m; d++) {
    const b = bulk[d];
    const cols = [rowOf[gate[d]], rowOf[source[d]], rowOf[drain[d]], b >= 0 ? rowOf[b] : -1];
    const rs = [rowOf[source[d]], rowOf[drain[d]]];
    for (let a = 0; a < 2; a++) {
      if (rs[a] < 0) continue;
      for (let c = 0; c < 4; c++) {
        if (cols[c] < 0) continue;
        ti[nz] = rs[a];
        tj[nz] = cols[c];
        slotPair[8 * d + 4 * a + c] = nz++;
      }
    }
  }
  const { C: J, map } = compressPattern(rows, rows, ti, tj, nz);
  const slots = new Int32Array(8 * m);
  for (let k = 0; k < 8 * m; k++) slots[k] = slotPair[k] < 0 ? -1 : map[slotPair[k]];
  const adj = symmetricAdjacency(J);
  const ordering: OrderingName = rows >= NESTED_FROM ? "nd" : "amd";
  const q = ordering === "nd" ? nestedDissection(rows, adj.p, adj.i) : amd(rows, adj.p, adj.i);
  return {
    lu: analyseLu(J, adj.p, adj.i, q),
    fallbacks: 0,
    detSign: 0,
    rows,
    rowOf,
    nodeOfRow,
    J,
    slots,
    q,
    ordering,
    F: new Float64Array(rows),
    delta: new Float64Array(rows),
    work: new Float64Array(rows),
    analyseMs: performance.now() - t0,
  };
}

/**
 * F (currents entering each internal row) and, when `withJacobian`, J.x, at
 * node voltages V with rails scaled by alpha (already applied to V) and injects by alpha.
 * Returns [max |F|, max |device current|].
 */
function assemble(
  plan: NewtonPlan,
  net: Network,
  P: DeviceParams,
  V: Float64Array,
  alpha: number,
  withJacobian: boolean,
  out4: Float64Array,
): [number, number] {
  const { devices, injects } = net;
  const { type, gate, source, drain, bulk } = devices;
  const { rowOf, F, slots } = plan;
  const jx = plan.J.x as Float64Array;
  F.fill(0);
  if (withJacobian) jx.fill(0);
  let imax = 0;
  for (let d = 0; d < devices.count; d++) {
    const sg = polarity(type[d]);
    const b = bulk[d];
    const vb = b >= 0 ? V[b] : 0;
    const s = source[d];
    const t = drain[d];
    deviceCurrent(P, d, sg * (V[gate[d]] - vb), sg * (V[s] - vb), sg * (V[t] - vb), out4);
    const i = out4[0];
    const a = Math.abs(i);
    if (a > imax) imax = a;
    const rs = rowOf[s];
    const rt = rowOf[t];
    if (rs >= 0) F[rs] += sg * i;
    if (rt >= 0) F[rt] -= sg * i;
    if (!withJacobian) continue;
    // ∂(σI)/∂V_t = ∂I/∂x_t for t = g, s, d; ∂(σI)/∂V_b = −(∂I/∂x_g + ∂I/∂x_s + ∂I/∂x_d).
    const dg = out4[1];
    const ds = out4[2];
    const dd = out4[3];
    const db = -(dg + ds + dd);
    const base = 8 * d;
    if (rs >= 0) {
      let q = slots[base];
      if (q >= 0) jx[q] += dg;
      q = slots[base + 1];
      if (q >= 0) jx[q] += ds;
      q = slots[base + 2];
      if (q >= 0) jx[q] += dd;
      q = slots[base + 3];
      if (q >= 0) jx[q] += db;
    }
    if (rt >= 0) {
      let q = slots[base + 4];
      if (q >= 0) jx[q] -= dg;
      q = slots[base + 5];
      if (q >= 0) jx[q] -= ds;
      q = slots[base + 6];
      if (q >= 0) jx[q] -= dd;
      q = slots[base + 7];
      if (q >= 0) jx[q] -= db;
    }
  }
  for (let j = 0; j < injects.count; j++) {
    const v = alpha * injects.value[j];
    const rf = rowOf[injects.from[j]];
    const rt = rowOf[injects.to[j]];
    if (rf >= 0) F[rf] -= v;
    if (rt >= 0) F[rt] += v;
  }
  let fmax = 0;
  for (let r = 0; r < plan.rows; r++) {
    const f = Math.abs(F[r]);
    if (!(f <= fmax)) fmax = f;
  }
  return [fmax, imax];
}

/** J at node voltages V (rails at their values), into plan.J's values; plan.F holds the currents entering each row. */
export function jacobianAt(plan: NewtonPlan, net: Network, P: DeviceParams, V: Float64Array): Csc {
  assemble(plan, net, P, V, 1, true, new Float64Array(4));
  return plan.J;
}

/** Damped Newton from V (internal entries are the start; rails must hold alpha·railValue). Updates V in place. */
function newtonLoop(
  plan: NewtonPlan,
  net: Network,
  P: DeviceParams,
  V: Float64Array,
  alpha: number,
  maxIter: number,
): { converged: boolean; iterations: number; residual: number; worstRow: number } {
  const out4 = new Float64Array(4);
  const maxStep = MAX_STEP_UT * P.ut;
  plan.detSign = 0;
  let lastStep = Infinity;
  let residual = Infinity;
  for (let it = 0; it <= maxIter; it++) {
    const [fmax, imax] = assemble(plan, net, P, V, alpha, true, out4);
    residual = fmax;
    if (!Number.isFinite(fmax)) return { converged: false, iterations: it, residual: fmax, worstRow: worstRow(plan) };
    if (
      lastStep <= STEP_TOL &&
      (fmax < ABS_TOL ||
        fmax <= REL_TOL * imax ||
        resolved(plan, net, P, V, alpha, Math.max(ABS_TOL, REL_TOL * imax), out4))
    )
      return { converged: true, iterations: it, residual: fmax, worstRow: -1 };
    if (it === maxIter) break;
    if (!newtonStep(plan)) return { converged: false, iterations: it, residual: fmax, worstRow: worstRow(plan) };
    const { delta } = plan;
    let dmax = 0;
    for (let r = 0; r < plan.rows; r++) {
      const a = Math.abs(delta[r]);
      if (!(a <= dmax)) dmax = a;
    }
    if (!Number.isFinite(dmax)) return { converged: false, iterations: it, residual: fmax, worstRow: worstRow(plan) };
    const lambda = dmax > maxStep ? maxStep / dmax : 1;
    for (let r = 0; r < plan.rows; r++) V[plan.nodeOfRow[r]] += lambda * delta[r];
    lastStep = lambda * dmax;
  }
  assemble(plan, net, P, V, alpha, false, out4);
  return { converged: false, iterations: maxIter, residual, worstRow: worstRow(plan) };
}

/**
 * δ = −J⁻¹·F (plan.delta): the supernodal LU refactored numerically in the
 * plan's analysis, or, when its pivots inside the diagonal blocks are not
 * acceptable, a factorisation with partial pivoting over whole columns
 * (lu.ts). False when J is singular. Leaves F negated.
 */
function newtonStep(plan: NewtonPlan): boolean {
  const { F, delta, work } = plan;
  for (let r = 0; r < plan.rows; r++) F[r] = -F[r];
  const factor = factorJacobian(plan);
  if (factor === null) return false;
  if (factor === plan.lu) solveLu(plan.lu, F, delta);
  else luSolve(factor as LuFactor, F, delta, work);
  return true;
}

/** Factors plan.J (supernodal, else partial pivoting) and records the sign of its determinant; null when singular. */
function factorJacobian(plan: NewtonPlan): SupernodalLu | LuFactor | null {
  if (factorLu(plan.lu, plan.J).ok) {
    plan.detSign = determinantSign(plan.lu);
    return plan.lu;
  }
  plan.fallbacks++;
  const res = lu(plan.J, plan.q);
  if (!res.ok) return null;
  plan.detSign = generalSign(res.factor);
  return res.factor;
}

/**
 * Whether a converged solution is unstable (plan.J assembled at it): with a
 * small capacitance at every node the network moves as C·dV/dt = F(V), so a
 * solution is stable when every eigenvalue of J = ∂F/∂V has a negative real
 * part, and then sign(det J) = (−1)^rows. The opposite sign means an odd
 * number of eigenvalues with a positive real part: a disturbance grows (a
 * latch at its balance point). The determinant's sign comes from the last
 * factorisation, one step of at most STEP_TOL before the solution (made now
 * when the loop converged without factoring).
 */
function unstable(plan: NewtonPlan): boolean {
  if (plan.detSign === 0 && factorJacobian(plan) === null) return false;
  return plan.detSign !== (plan.rows % 2 === 0 ? 1 : -1);
}

/**
 * Whether every row's KCL error (plan.F, just assembled at V) is at most
 * `floor` or within what double precision can resolve there: RES_ULPS ulps of
 *   Σ over its devices of Σ_t |∂I/∂x_t|·(|V_t| + |V_b|) + I_F·(1 + |ln I_F|) + I_R·(1 + |ln I_R|),
 * plus the injects at the row. The first term is the current moved by
 * rounding each terminal voltage (x_t = σ(V_t − V_b)); the others the
 * rounding of each exponential, whose argument (ln I for the weak model; the
 * EKV F behaves alike or better while ispec·W/L < 1 A) carries a rounding of
 * an ulp of its own size. Uses plan.work; leaves F and J as they are.
 */
function resolved(
  plan: NewtonPlan,
  net: Network,
  P: DeviceParams,
  V: Float64Array,
  alpha: number,
  floor: number,
  out4: Float64Array,
): boolean {
  const { devices, injects } = net;
  const { type, gate, source, drain, bulk } = devices;
  const { rowOf, F } = plan;
  const scale = plan.work;
  scale.fill(0);
  for (let d = 0; d < devices.count; d++) {
    const rs = rowOf[source[d]];
    const rt = rowOf[drain[d]];
    if (rs < 0 && rt < 0) continue;
    const sg = polarity(type[d]);
    const b = bulk[d];
    const vb = b >= 0 ? V[b] : 0;
    const vg = V[gate[d]];
    const vs = V[source[d]];
    const vd = V[drain[d]];
    const iF = deviceCurrent(P, d, sg * (vg - vb), sg * (vs - vb), sg * (vd - vb), out4);
    const iR = Math.abs(iF - out4[0]);
    const ab = Math.abs(vb);
    let e =
      Math.abs(out4[1]) * (Math.abs(vg) + ab) +
      Math.abs(out4[2]) * (Math.abs(vs) + ab) +
      Math.abs(out4[3]) * (Math.abs(vd) + ab);
    if (iF > 0) e += iF * (1 + Math.abs(Math.log(iF)));
    if (iR > 0) e += iR * (1 + Math.abs(Math.log(iR)));
    if (rs >= 0) scale[rs] += e;
    if (rt >= 0) scale[rt] += e;
  }
  for (let j = 0; j < injects.count; j++) {
    const v = Math.abs(alpha * injects.value[j]);
    const rf = rowOf[injects.from[j]];
    const rt = rowOf[injects.to[j]];
    if (rf >= 0) scale[rf] += v;
    if (rt >= 0) scale[rt] += v;
  }
  const ulps = RES_ULPS * Number.EPSILON;
  for (let r = 0; r < plan.rows; r++) {
    const f = Math.abs(F[r]);
    if (!(f <= floor || f <= ulps * scale[r])) return false;
  }
  return true;
}

function worstRow(plan: NewtonPlan): number {
  let w = -1;
  let best = -1;
  for (let r = 0; r < plan.rows; r++) {
    const f = Math.abs(plan.F[r]);
    if (!(f <= best)) {
      best = f;
      w = r;
    }
  }
  return w;
}

/**
 * Solves the point: V holds the start for internal nodes on entry (rails are
 * overwritten with their values) and the solution on success.
 */
export function solveNewton(
  plan: NewtonPlan,
  net: Network,
  P: DeviceParams,
  V: Float64Array,
  opts: { forceContinuation?: boolean } = {},
): NewtonOk | NewtonFail {
  const rv = net.nodes.railValue;
  const nn = rv.length;
  for (let k = 0; k < nn; k++) if (plan.rowOf[k] < 0) V[k] = rv[k];
  // Where a failure is reported from: the end of the plain attempt (or the start).
  const report = Float64Array.from(V);
  let total = 0;
  if (!opts.forceContinuation) {
    const r = newtonLoop(plan, net, P, V, 1, MAX_ITER);
    total += r.iterations;
    if (r.converged)
      return { ok: true, iterations: total, residual: r.residual, continuation: false, unstable: unstable(plan) };
    let finite = true;
    for (let k = 0; k < nn; k++) if (!Number.isFinite(V[k])) finite = false;
    if (finite) report.set(V);
  }
  // Source stepping: α from 0 to 1, V = 0 solves α = 0 exactly.
  V.fill(0);
  let alpha = 0;
  let step = 0.1;
  let last = { converged: false, iterations: 0, residual: Infinity, worstRow: -1 };
  const saved = new Float64Array(nn);
  while (alpha < 1) {
    const next = Math.min(1, alpha + step);
    saved.set(V);
    for (let k = 0; k < nn; k++) if (plan.rowOf[k] < 0) V[k] = next * rv[k];
    last = newtonLoop(plan, net, P, V, next, 60);
    total += last.iterations;
    if (last.converged) {
      alpha = next;
      step = Math.min(0.5, step * 2);
    } else {
      V.set(saved);
      step /= 4;
      if (step < 1e-6) break;
    }
  }
  if (alpha >= 1 && last.converged)
    return { ok: true, iterations: total, residual: last.residual, continuation: true, unstable: unstable(plan) };
  V.set(report);
  const out4 = new Float64Array(4);
  const [fmax] = assemble(plan, net, P, V, 1, false, out4);
  const row = worstRow(plan);
  const node = row >= 0 ? plan.nodeOfRow[row] : -1;
  const name = node >= 0 ? net.nodes.names[node] : "?";
  return {
    ok: false,
    iterations: total,
    residual: fmax,
    node,
    message: `Newton did not converge (${total} iterations, with source-stepping continuation to α = ${alpha.toFixed(3)}): the largest KCL error is ${plan.F[row] !== undefined ? Math.abs(plan.F[row]).toExponential(2) : "?"} A at node ${name}`,
  };
}

/**
 * A starting point for Newton: each internal node at the mean of the rails its
 * channels touch, or the mean of all rails when none.
 */
export function initialGuess(net: Network, V: Float64Array): void {
  const { nodes, devices } = net;
  const rv = nodes.railValue;
  const nn = rv.length;
  const sum = new Float64Array(nn);
  const cnt = new Int32Array(nn);
  let all = 0;
  let nr = 0;
  for (let k = 0; k < nn; k++) {
    if (Number.isFinite(rv[k])) {
      all += rv[k];
      nr++;
    }
  }
  const mean = nr > 0 ? all / nr : 0;
  const { source, drain } = devices;
  for (let d = 0; d < devices.count; d++) {
    const s = source[d];
    const t = drain[d];
    if (Number.isFinite(rv[t]) && !Number.isFinite(rv[s])) {
      sum[s] += rv[t];
      cnt[s]++;
    }
    if (Number.isFinite(rv[s]) && !Number.isFinite(rv[t])) {
      sum[t] += rv[s];
      cnt[t]++;
    }
  }
  for (let k = 0; k < nn; k++) V[k] = Number.isFinite(rv[k]) ? rv[k] : cnt[k] > 0 ? sum[k] / cnt[k] : mean;
}

/** Sign of det A for P·A·Q = L·U (lu.ts): the signs of U's pivots and of the two permutations. */
function generalSign(F: LuFactor): number {
  let sign = 1;
  for (let k = 0; k < F.n; k++) {
    const u = F.ux[F.up[k + 1] - 1];
    if (!(u !== 0)) return 0;
    if (u < 0) sign = -sign;
  }
  return sign * parity(F.pinv) * parity(F.q);
}

/** +1 for an even permutation, −1 for an odd one (n minus its number of cycles, mod 2). */
export function parity(p: Int32Array): number {
  const seen = new Uint8Array(p.length);
  let swaps = 0;
  for (let i = 0; i < p.length; i++) {
    if (seen[i]) continue;
    let len = 0;
    for (let j = i; !seen[j]; j = p[j]) {
      seen[j] = 1;
      len++;
    }
    swaps += len - 1;
  }
  return swaps % 2 === 0 ? 1 : -1;
}
