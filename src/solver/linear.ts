/**
 * The exact DC solve of a linear-class network in pseudo-voltages
 * (Vittoz & Arreguit 1993; PHYSICS.md §3).
 *
 * With u = exp(−V/U_T) at n-channel nodes and u = exp(V/U_T) at p-channel
 * nodes, a device whose gate and bulk/well sit on rails carries
 * I = g·(u_s − u_d) (nfet drain→source, pfet source→drain), with
 *   nfet: g = i0·(W/L)·e^{−κ·dVT/U_T}·exp((κ(Vg − Vb) + Vb)/U_T)
 *   pfet: g = i0·(W/L)·e^{−κ·dVT/U_T}·exp((κ(Vw − Vg) − Vw)/U_T).
 * KCL at an internal node k is then Σ_m g_km (u_k − u_m) = b_k, with b_k the
 * current the injects draw out of k (n-channel node) or push into k (p-channel
 * node): a weighted graph Laplacian, symmetric positive definite once every
 * group of nodes reaches a rail. Rails enter the right-hand side.
 *
 * Scaling (so that no exponential overflows and the system is O(1)): per
 * polarity class c, u is measured from a reference rail voltage Vref_c
 * (û = u/u(Vref_c) ≤ 1 on every rail) and conductances are divided by
 * gs_c = i0·exp(Λ_c)·u(Vref_c), Λ_c the largest gate exponent of the class.
 *
 * Phases: `planLinear` (structure: graph, ordering, symbolic analysis, the
 * device → matrix-entry maps) once per run; `factorLinear` (conductances,
 * numeric Cholesky, rail right-hand side) when rails, sizes, temperature,
 * kappa or mismatch change; `solveLinear` (injects, triangular solves, back
 * to voltages) for every point.
 */

import { type Network, NFET } from "../lang/network";
import { CLASS_N, type Classification } from "./classify";
import { cholesky, type CholeskyWork, choleskyWork, type Factor, matrixTriangle } from "./cholesky";
import type { DeviceParams } from "./device";
import { amd, natural, nestedDissection, type OrderingName } from "./order";
import { cumsum, dedupeAdjacency, type Csc, multiplySymmetric } from "./sparse";
import { analyse, type Kernel, type Symbolic } from "./symbolic";
import { lsolve, ltsolve } from "./triangular";

/** The fill-reducing ordering used when the natural order has fill (measured on grid256/grid512: see bench/). */
export const DEFAULT_ORDERING: OrderingName = "nd";

export type OrderingChoice = OrderingName | "auto";

export interface LinearOptions {
  /** "auto": the natural order when it has no fill at all (chains, trees), else DEFAULT_ORDERING. */
  ordering?: OrderingChoice;
  kernel?: Kernel | "auto";
  /**
   * Steps of iterative refinement in working precision after the direct
   * solve (default 0: the diagonally dominant Laplacian already gives KCL to
   * ~1e-13 of each node's channel currents; see tests/unit/solver-linear).
   * One step makes the solve componentwise backward stable (Skeel,
   * "Iterative refinement implies numerical stability for Gaussian
   * elimination", Math. Comp. 35, 1980).
   */
  refine?: number;
}

export interface LinearPlan {
  /** Internal nodes, in node-index order: row r is node nodeOfRow[r]. */
  rows: number;
  nodeOfRow: Int32Array;
  /** Row of each node, -1 for a rail. */
  rowOf: Int32Array;
  /** 1 when row r is an n-channel node, 0 for p-channel. */
  rowIsN: Uint8Array;
  ordering: OrderingName;
  symbolic: Symbolic;
  /** The permuted triangle of the matrix the kernel reads; values refilled by factorLinear. */
  C: Csc;
  /** Per device: positions in C.x of the diagonal of its source row and drain row, and of the off-diagonal (-1 when absent). */
  posS: Int32Array;
  posD: Int32Array;
  posOff: Int32Array;
  /** Devices with exactly one internal terminal: they put g·û(rail) on the right-hand side. */
  railDevices: Int32Array;
  work: CholeskyWork;
  /** State of the last successful factorisation. */
  factor: Factor | null;
  /** Scaled conductance ĝ of every device at the last factorisation. */
  g: Float64Array;
  /** Right-hand side from the rails at the last factorisation (scaled). */
  rhsRails: Float64Array;
  /** Scaling of the last factorisation: reference voltages and ln gs per class (index 0 = p, 1 = n). */
  vref: Float64Array;
  lnScale: Float64Array;
  /** Scratch vectors of length rows. */
  b: Float64Array;
  y: Float64Array;
  r: Float64Array;
  /** Steps of iterative refinement per solve. */
  refine: number;
  analyseMs: number;
}

export type LinearFailure = { ok: false; node: number; message: string };

/** Structure of the linear system for `net` (which must be in the linear class, without structural problems). */
export function planLinear(net: Network, cls: Classification, opts: LinearOptions = {}): LinearPlan {
  const t0 = performance.now();
  const { nodes, devices } = net;
  const nn = nodes.names.length;
  const m = devices.count;
  const rowOf = new Int32Array(nn);
  let rows = 0;
  for (let k = 0; k < nn; k++) rowOf[k] = Number.isFinite(nodes.railValue[k]) ? -1 : rows++;
  const nodeOfRow = new Int32Array(rows);
  const rowIsN = new Uint8Array(rows);
  for (let k = 0; k < nn; k++) {
    const r = rowOf[k];
    if (r < 0) continue;
    nodeOfRow[r] = k;
    rowIsN[r] = cls.nodeClass[k] & CLASS_N ? 1 : 0;
  }
  const { source, drain } = devices;
  // Adjacency graph of the internal rows (both directions, duplicates merged).
  const deg = new Int32Array(rows);
  let railCount = 0;
  for (let d = 0; d < m; d++) {
    const a = rowOf[source[d]];
    const b = rowOf[drain[d]];
    if (a >= 0 && b >= 0) {
      if (a !== b) {
        deg[a]++;
        deg[b]++;
      }
    } else if (a >= 0 || b >= 0) railCount++;
  }
  const ap = new Int32Array(rows + 1);
  cumsum(ap, deg, rows);
  const idx = new Int32Array(ap[rows]);
  const railDevices = new Int32Array(railCount);
  railCount = 0;
  for (let d = 0; d < m; d++) {
    const a = rowOf[source[d]];
    const b = rowOf[drain[d]];
    if (a >= 0 && b >= 0) {
      if (a !== b) {
        idx[deg[a]++] = b;
        idx[deg[b]++] = a;
      }
    } else if (a >= 0 || b >= 0) railDevices[railCount++] = d;
  }
  const adj = dedupeAdjacency(rows, ap, idx);
  // Ordering and symbolic analysis.
  const choice = opts.ordering ?? "auto";
  let ordering: OrderingName;
  let symbolic: Symbolic;
  if (choice === "auto") {
    symbolic = analyse(rows, adj.p, adj.i, natural(rows), { kernel: opts.kernel });
    ordering = "natural";
    if (symbolic.lnz > rows + adj.p[rows] / 2) {
      ordering = DEFAULT_ORDERING;
      symbolic = analyse(rows, adj.p, adj.i, orderBy(ordering, rows, adj.p, adj.i), { kernel: opts.kernel });
    }
  } else {
    ordering = choice;
    symbolic = analyse(rows, adj.p, adj.i, orderBy(choice, rows, adj.p, adj.i), { kernel: opts.kernel });
  }
  // Permuted triangle pattern and the device → entry maps.
  const lower = matrixTriangle(symbolic) === "lower";
  const pinv = symbolic.pinv;
  const colOf = (a: number, b: number): number => (lower ? Math.min(a, b) : Math.max(a, b));
  const cnt = new Int32Array(rows);
  // Diagonal entries first in each column, then the off-diagonal ones.
  for (let r = 0; r < rows; r++) cnt[r] = 1 + (adj.p[r + 1] - adj.p[r]);
  // Each undirected edge appears twice in adj; it belongs to one column only.
  for (let r = 0; r < rows; r++) {
    const pr = pinv[r];
    for (let q = adj.p[r]; q < adj.p[r + 1]; q++) {
      const ps = pinv[adj.i[q]];
      if (colOf(pr, ps) !== pr) cnt[r]--;
    }
  }
  const colCount = new Int32Array(rows);
  for (let r = 0; r < rows; r++) colCount[pinv[r]] = cnt[r];
  const cp = new Int32Array(rows + 1);
  cumsum(cp, colCount, rows);
  const ci = new Int32Array(cp[rows]);
  const cx = new Float64Array(cp[rows]);
  const posS = new Int32Array(m).fill(-1);
  const posD = new Int32Array(m).fill(-1);
  const posOff = new Int32Array(m).fill(-1);
  const diagPos = new Int32Array(rows);
  for (let c = 0; c < rows; c++) {
    diagPos[c] = colCount[c]++;
    ci[diagPos[c]] = c;
  }
  // Edge slots: row r owns the entries with its neighbours s whose column is pinv[r].
  const slotOf = new Int32Array(adj.p[rows]);
  for (let r = 0; r < rows; r++) {
    const pr = pinv[r];
    for (let q = adj.p[r]; q < adj.p[r + 1]; q++) {
      const ps = pinv[adj.i[q]];
      if (colOf(pr, ps) !== pr) continue;
      const slot = colCount[pr]++;
      ci[slot] = ps;
      slotOf[q] = slot;
    }
  }
  // Device maps: diagonal positions, and the off-diagonal slot looked up in the owner row's list.
  const owner = new Int32Array(rows).fill(-1);
  const ownerSlot = new Int32Array(rows);
  // Devices grouped by owning row; a per-row marker resolves their slots in O(devices + edges).
  const devHead = new Int32Array(rows).fill(-1);
  const devNext = new Int32Array(m);
  for (let d = m - 1; d >= 0; d--) {
    const a = rowOf[source[d]];
    const b = rowOf[drain[d]];
    // A channel from a node to itself carries no current: no entry.
    if (source[d] === drain[d]) continue;
    if (a >= 0) posS[d] = diagPos[pinv[a]];
    if (b >= 0) posD[d] = diagPos[pinv[b]];
    if (a >= 0 && b >= 0 && a !== b) {
      const own = colOf(pinv[a], pinv[b]) === pinv[a] ? a : b;
      devNext[d] = devHead[own];
      devHead[own] = d;
    }
  }
  for (let r = 0; r < rows; r++) {
    if (devHead[r] === -1) continue;
    const pr = pinv[r];
    for (let q = adj.p[r]; q < adj.p[r + 1]; q++) {
      const s = adj.i[q];
      if (colOf(pr, pinv[s]) !== pr) continue;
      owner[s] = r;
      ownerSlot[s] = slotOf[q];
    }
    for (let d = devHead[r]; d !== -1; d = devNext[d]) {
      const a = rowOf[source[d]];
      const other = a === r ? rowOf[drain[d]] : a;
      if (owner[other] !== r) throw new Error("linear: internal error, device edge missing from the matrix pattern");
      posOff[d] = ownerSlot[other];
    }
  }
  const C: Csc = { m: rows, n: rows, p: cp, i: ci, x: cx };
  return {
    rows,
    nodeOfRow,
    rowOf,
    rowIsN,
    ordering,
    symbolic,
    C,
    posS,
    posD,
    posOff,
    railDevices,
    work: choleskyWork(symbolic),
    factor: null,
    g: new Float64Array(m),
    rhsRails: new Float64Array(rows),
    vref: new Float64Array(2),
    lnScale: new Float64Array(2),
    b: new Float64Array(rows),
    y: new Float64Array(rows),
    r: new Float64Array(rows),
    refine: opts.refine ?? 0,
    analyseMs: performance.now() - t0,
  };
}

function orderBy(name: OrderingName, n: number, ap: Int32Array, ai: Int32Array): Int32Array {
  return name === "amd" ? amd(n, ap, ai) : name === "nd" ? nestedDissection(n, ap, ai) : natural(n);
}

/**
 * Conductances, numeric factorisation and the rails' right-hand side for the
 * network's current rail values, sizes, settings and device constants P.
 * On a non-positive pivot, names the node (cannot happen for a valid linear
 * network; reported rather than thrown).
 */
export function factorLinear(plan: LinearPlan, net: Network, P: DeviceParams): { ok: true } | LinearFailure {
  const { devices, nodes } = net;
  const V = nodes.railValue;
  const m = devices.count;
  const { type, gate, source, drain, bulk } = devices;
  const { ut, kappa } = P;
  // Reference voltages: lowest rail under an n-channel terminal, highest under a p-channel one.
  let vrefN = Infinity;
  let vrefP = -Infinity;
  let lamN = -Infinity;
  let lamP = -Infinity;
  const gl = plan.g; // gate exponent first, conductance after
  for (let d = 0; d < m; d++) {
    const s = source[d];
    const t = drain[d];
    const isN = type[d] === NFET;
    const b = bulk[d];
    const vb = b >= 0 ? V[b] : 0;
    const e = isN ? (kappa * (V[gate[d]] - vb) + vb) / ut : (kappa * (vb - V[gate[d]]) - vb) / ut;
    gl[d] = e;
    if (isN) {
      if (e > lamN) lamN = e;
      if (plan.rowOf[s] < 0 && V[s] < vrefN) vrefN = V[s];
      if (plan.rowOf[t] < 0 && V[t] < vrefN) vrefN = V[t];
    } else {
      if (e > lamP) lamP = e;
      if (plan.rowOf[s] < 0 && V[s] > vrefP) vrefP = V[s];
      if (plan.rowOf[t] < 0 && V[t] > vrefP) vrefP = V[t];
    }
  }
  if (!Number.isFinite(vrefN)) vrefN = 0;
  if (!Number.isFinite(vrefP)) vrefP = 0;
  if (!Number.isFinite(lamN)) lamN = 0;
  if (!Number.isFinite(lamP)) lamP = 0;
  const lnI0 = Math.log(net.settings.i0);
  plan.vref[0] = vrefP;
  plan.vref[1] = vrefN;
  // ln gs_c = ln i0 + Λ_c + ln u(Vref_c)
  plan.lnScale[0] = lnI0 + lamP + vrefP / ut;
  plan.lnScale[1] = lnI0 + lamN - vrefN / ut;
  const cx = plan.C.x as Float64Array;
  cx.fill(0);
  const { posS, posD, posOff } = plan;
  const lnm = P.lnScale;
  for (let d = 0; d < m; d++) {
    // ĝ = (W/L)·e^{−κ·dVT/U_T}·exp(e − Λ_c) = exp(lnScale_d − ln i0 + e − Λ_c)
    const lam = type[d] === NFET ? lamN : lamP;
    const g = Math.exp(lnm[d] - lnI0 + gl[d] - lam);
    gl[d] = g;
    const a = posS[d];
    const b = posD[d];
    if (a >= 0) cx[a] += g;
    if (b >= 0) cx[b] += g;
    const o = posOff[d];
    if (o >= 0) cx[o] -= g;
  }
  const rhs = plan.rhsRails;
  rhs.fill(0);
  const rd = plan.railDevices;
  for (let k = 0; k < rd.length; k++) {
    const d = rd[k];
    const s = source[d];
    const rs = plan.rowOf[s];
    const row = rs >= 0 ? rs : plan.rowOf[drain[d]];
    const rail = rs >= 0 ? drain[d] : s;
    // û(rail) = exp(∓(V − Vref)/U_T) ≤ 1
    const u = type[d] === NFET ? Math.exp(-(V[rail] - vrefN) / ut) : Math.exp((V[rail] - vrefP) / ut);
    rhs[row] += gl[d] * u;
  }
  const res = cholesky(plan.C, plan.symbolic, plan.factor ?? undefined, plan.work);
  if (!res.ok) {
    plan.factor = null;
    const node = plan.nodeOfRow[plan.symbolic.perm[res.column]];
    return { ok: false, node, message: `the linear system is singular at node ${net.nodes.names[node]} (pivot ${res.pivot.toPrecision(3)}); it has no conductance to a rail` };
  }
  plan.factor = res.factor;
  return { ok: true };
}

/**
 * Node voltages for the current inject values, with the last factorisation.
 * Writes every node of V (rails at their values). û ≤ 0 at a node means its
 * current sources ask more than its channels can carry: no physical operating
 * point, reported naming the node.
 */
export function solveLinear(plan: LinearPlan, net: Network, V: Float64Array): { ok: true } | LinearFailure {
  const factor = plan.factor;
  if (!factor) throw new Error("solveLinear: no factorisation");
  const { rows, rowOf, rowIsN, nodeOfRow } = plan;
  const { injects, nodes, settings } = net;
  const ut = settings.ut;
  const b = plan.b;
  const y = plan.y;
  const perm = plan.symbolic.perm;
  // b = rails' part + injects: drawn out of an n-channel node, pushed into a p-channel node.
  b.set(plan.rhsRails);
  const invN = Math.exp(-plan.lnScale[1]);
  const invP = Math.exp(-plan.lnScale[0]);
  for (let j = 0; j < injects.count; j++) {
    const v = injects.value[j];
    const rf = rowOf[injects.from[j]];
    const rt = rowOf[injects.to[j]];
    if (rf >= 0) b[rf] += rowIsN[rf] ? v * invN : -v * invP;
    if (rt >= 0) b[rt] += rowIsN[rt] ? -v * invN : v * invP;
  }
  // y = P·b; y = L \ y; y = Lᵀ \ y (û = Pᵀ·y); then refinement: y += C \ (P·b − C·y).
  for (let k = 0; k < rows; k++) y[k] = b[perm[k]];
  lsolve(factor, y);
  ltsolve(factor, y);
  const r = plan.r;
  for (let step = 0; step < plan.refine; step++) {
    multiplySymmetric(plan.C, y, r);
    for (let k = 0; k < rows; k++) r[k] = b[perm[k]] - r[k];
    lsolve(factor, r);
    ltsolve(factor, r);
    for (let k = 0; k < rows; k++) y[k] += r[k];
  }
  const vrefN = plan.vref[1];
  const vrefP = plan.vref[0];
  let worst = -1;
  let worstU = Infinity;
  const rv = nodes.railValue;
  for (let k = 0; k < rows; k++) {
    const u = y[k];
    const r = perm[k];
    if (!(u > 0) || u === Infinity) {
      if (!(u >= worstU)) {
        worstU = u;
        worst = r;
      }
      continue;
    }
    V[nodeOfRow[r]] = rowIsN[r] ? vrefN - ut * Math.log(u) : vrefP + ut * Math.log(u);
  }
  for (let k = 0; k < rv.length; k++) if (rowOf[k] < 0) V[k] = rv[k];
  if (worst >= 0) {
    const node = nodeOfRow[worst];
    const name = nodes.names[node];
    return {
      ok: false,
      node,
      message: `no physical operating point: at node ${name} the current sources ask more than the channels can carry (pseudo-voltage ${rowIsN[worst] ? "exp(-V/ut)" : "exp(V/ut)"} would be ${Number.isNaN(worstU) ? "undefined" : "≤ 0"})`,
    };
  }
  return { ok: true };
}
