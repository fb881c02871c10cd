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
 * kappa or mismatch change; `solveLinear` (injects, triangular solves — or
 * superposition of cached responses when only inject values changed — and
 * back to voltages) for every point; `pseudoCurrents` gives the evaluation
 * the per-node exponentials of the reported voltages.
 */

import { type Network, NFET } from "../lang/network";
import { CLASS_N, type Classification } from "./classify";
import { cholesky, type CholeskyWork, choleskyWork, type Factor, matrixTriangle } from "./cholesky";
import type { DeviceParams } from "./device";
import { amd, natural, nestedDissection, type OrderingName } from "./order";
import { cumsum, dedupeAdjacency, type Csc, multiplySymmetric } from "./sparse";
import { analyse, type Kernel, naturalHasNoFill, type Symbolic } from "./symbolic";
import { lsolve, ltsolve } from "./triangular";
import { forestSymbolic, leafFirstOrder } from "./tree";

/**
 * NFET as a module-local constant: a loader that compiles ES modules to
 * CommonJS (tsx, the bench's runner) turns each read of an imported binding
 * into a getter call, measured at ~60 ms per 10^6-device pass.
 */
const N_TYPE: number = NFET;

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
  /** Row of each node; for a rail, −1 − its index in railNodes (so < 0). */
  rowOf: Int32Array;
  /** The rail nodes. */
  railNodes: Int32Array;
  /** 1 when row r is an n-channel node, 0 for p-channel. */
  rowIsN: Uint8Array;
  /** The ordering; "tree" when the graph is a forest, eliminated leaves first (tree.ts). */
  ordering: OrderingName | "tree";
  symbolic: Symbolic;
  /**
   * The permuted triangle of the matrix the kernel reads; values refilled by
   * factorLinear. For a forest without refinement the tree kernel then
   * overwrites them with L (C.x is the factor's value array: one array less).
   */
  C: Csc;
  /** Position in C.x of the diagonal of each row. */
  rowDiag: Int32Array;
  /**
   * Per device between two internal rows: position in C.x of its off-diagonal
   * entry (-1 otherwise). null for a forest, where that entry follows the
   * child's diagonal: min(rowDiag[a], rowDiag[b]) + 1.
   */
  posOff: Int32Array | null;
  work: CholeskyWork;
  /** State of the last successful factorisation. */
  factor: Factor | null;
  /** g·gs_c: the device's pseudo-conductance in amperes (I = c·(û_s − û_d)), for the evaluation. */
  c: Float64Array;
  /** Superposition state for points that change only inject values. */
  sup: Superposition;
  /** Per-rail caches of the gate factor exp(gate exponent − Λ_c) within one factorisation (gates are rails in the linear class). */
  gateStamp: Int32Array;
  gateValue: Float64Array;
  gateWell: Int32Array;
  /**
   * The distinct gate exponents (every one at least once): device type, gate
   * node and bulk/well node (-1: substrate) of each; the factorisation takes
   * the largest exponent per class from these instead of from every device.
   */
  keyType: Uint8Array;
  keyGate: Int32Array;
  keyBulk: Int32Array;
  /** Scratch: û of rail q for n-channel (2q) and p-channel (2q + 1) terminals. */
  uRail: Float64Array;
  stamp: number;
  /** Node touched by an n-channel (1) / p-channel (2) source or drain. */
  nodeTouch: Uint8Array;
  /** Scratch for pseudoCurrents (overwritten by the next point; allocated on first use). */
  en: Float64Array;
  ep: Float64Array;
  /** Right-hand side from the rails at the last factorisation (scaled, permuted). */
  rhsRails: Float64Array;
  /** Scaling of the last factorisation: reference voltages and ln gs per class (index 0 = p, 1 = n). */
  vref: Float64Array;
  lnScale: Float64Array;
  /** Scratch vectors of length rows (b and r only with refinement, allocated on first use). */
  b: Float64Array;
  y: Float64Array;
  r: Float64Array;
  /** Steps of iterative refinement per solve. */
  refine: number;
  /** y holds the pseudo-voltages û (permuted) of the last successful solveLinear since the last factorLinear. */
  solved: boolean;
  analyseMs: number;
}

export type LinearFailure = { ok: false; node: number; message: string };

/** Most injects a factorisation follows by superposition before it falls back to full solves. */
const MAX_SUPERPOSED = 16;

/**
 * Superposition (the solution is linear in the inject values, PHYSICS.md §3):
 * after the first solve of a factorisation, a point whose injects differ from
 * the reference values only in `changed` is û = rest + Σ_j v_j·z_j, with
 * `rest` the solution for the rails and the unchanged injects and z_j the
 * response to 1 A in inject j (both in permuted order). A sink on an n-channel
 * node adds with one sign everywhere, so no cancellation is introduced.
 */
interface Superposition {
  fresh: boolean;
  disabled: boolean;
  ref: Float64Array;
  isChanged: Uint8Array;
  changed: number[];
  z: Float64Array[];
  /** Allocated on first use (length 0 before). */
  rest: Float64Array;
}

/** Structure of the linear system for `net` (which must be in the linear class, without structural problems). */
export function planLinear(net: Network, cls: Classification, opts: LinearOptions = {}): LinearPlan {
  const t0 = performance.now();
  const { nodes, devices } = net;
  const nn = nodes.names.length;
  const m = devices.count;
  const rowOf = new Int32Array(nn);
  let rows = 0;
  let rails = 0;
  for (let k = 0; k < nn; k++) rowOf[k] = Number.isFinite(nodes.railValue[k]) ? -1 - rails++ : rows++;
  const nodeOfRow = new Int32Array(rows);
  const rowIsN = new Uint8Array(rows);
  for (let k = 0; k < nn; k++) {
    const r = rowOf[k];
    if (r < 0) continue;
    nodeOfRow[r] = k;
    rowIsN[r] = cls.nodeClass[k] & CLASS_N ? 1 : 0;
  }
  const { source, drain, type, gate, bulk } = devices;
  // One pass: channel types per node, degrees and neighbour XORs of the graph
  // of internal rows (for the forest test).
  const nodeTouch = new Uint8Array(nn);
  const deg = new Int32Array(rows);
  const nbrXor = new Int32Array(rows);
  // Gate keys, recorded when they differ from the last one of their gate rail and type (lastKey: bulk + 2, 0 = none).
  const lastKey = new Int32Array(2 * rails);
  const kType: number[] = [];
  const kGate: number[] = [];
  const kBulk: number[] = [];
  for (let d = 0; d < m; d++) {
    const s = source[d];
    const t = drain[d];
    const bit = type[d] === N_TYPE ? 1 : 2;
    const gq = -1 - rowOf[gate[d]];
    const slot = 2 * gq + bit - 1;
    if (gq < 0 || lastKey[slot] !== bulk[d] + 2) {
      if (gq >= 0) lastKey[slot] = bulk[d] + 2;
      kType.push(type[d]);
      kGate.push(gate[d]);
      kBulk.push(bulk[d]);
    }
    nodeTouch[s] |= bit;
    nodeTouch[t] |= bit;
    const a = rowOf[s];
    const b = rowOf[t];
    if (a >= 0 && b >= 0 && a !== b) {
      deg[a]++;
      deg[b]++;
      nbrXor[a] ^= b;
      nbrXor[b] ^= a;
    }
  }
  const choice = opts.ordering ?? "auto";
  const forestTried = choice === "auto" && (opts.kernel ?? "auto") === "auto";
  const forest = forestTried ? leafFirstOrder(rows, deg, nbrXor) : null;
  const rowDiag = new Int32Array(rows);
  let posOff: Int32Array | null = null;
  let ordering: OrderingName | "tree";
  let symbolic: Symbolic;
  let C: Csc;
  if (forest) {
    // A forest: leaves first, no fill, L has C's pattern (tree.ts); no general analysis.
    ordering = "tree";
    const fs = forestSymbolic(forest.perm, forest.pinv, forest.parent);
    symbolic = fs.symbolic;
    const lp = symbolic.lp;
    const pinv = symbolic.pinv;
    C = { m: rows, n: rows, p: lp, i: fs.rows, x: new Float64Array(symbolic.lnz) };
    for (let r = 0; r < rows; r++) rowDiag[r] = lp[pinv[r]];
  } else {
    if (forestTried) {
      // leafFirstOrder consumed deg: count again.
      deg.fill(0);
      for (let d = 0; d < m; d++) {
        const a = rowOf[source[d]];
        const b = rowOf[drain[d]];
        if (a >= 0 && b >= 0 && a !== b) {
          deg[a]++;
          deg[b]++;
        }
      }
    }
    ({ ordering, symbolic, C, posOff } = generalEntries(net, rows, rowOf, deg, rowDiag, opts));
  }
  const railNodes = new Int32Array(nn - rows);
  for (let k = 0, t = 0; k < nn; k++) if (rowOf[k] < 0) railNodes[t++] = k;
  return {
    rows,
    nodeOfRow,
    rowOf,
    railNodes,
    rowIsN,
    ordering,
    symbolic,
    C,
    rowDiag,
    posOff,
    work: choleskyWork(symbolic),
    factor: null,
    c: new Float64Array(m),
    sup: { fresh: true, disabled: false, ref: new Float64Array(net.injects.count), isChanged: new Uint8Array(net.injects.count), changed: [], z: [], rest: new Float64Array(0) },
    gateStamp: new Int32Array(rails),
    gateValue: new Float64Array(rails),
    gateWell: new Int32Array(rails),
    keyType: Uint8Array.from(kType),
    keyGate: Int32Array.from(kGate),
    keyBulk: Int32Array.from(kBulk),
    uRail: new Float64Array(2 * rails),
    stamp: 0,
    nodeTouch,
    en: new Float64Array(0),
    ep: new Float64Array(0),
    rhsRails: new Float64Array(rows),
    vref: new Float64Array(2),
    lnScale: new Float64Array(2),
    b: new Float64Array(0),
    y: new Float64Array(rows),
    r: new Float64Array(opts.refine ? rows : 0),
    refine: opts.refine ?? 0,
    solved: false,
    analyseMs: performance.now() - t0,
  };
}

/**
 * The general structure: adjacency graph of the internal rows (deg: their
 * degrees, consumed), ordering, symbolic analysis, the permuted triangle's
 * pattern, each row's diagonal position (rowDiag, filled) and each device's off-diagonal position.
 */
function generalEntries(
  net: Network,
  rows: number,
  rowOf: Int32Array,
  deg: Int32Array,
  rowDiag: Int32Array,
  opts: LinearOptions,
): { ordering: OrderingName; symbolic: Symbolic; C: Csc; posOff: Int32Array } {
  const { source, drain } = net.devices;
  const m = net.devices.count;
  // Adjacency graph of the internal rows (both directions, duplicates merged).
  const ap = new Int32Array(rows + 1);
  cumsum(ap, deg, rows);
  const idx = new Int32Array(ap[rows]);
  for (let d = 0; d < m; d++) {
    const a = rowOf[source[d]];
    const b = rowOf[drain[d]];
    if (a >= 0 && b >= 0 && a !== b) {
      idx[deg[a]++] = b;
      idx[deg[b]++] = a;
    }
  }
  const adj = dedupeAdjacency(rows, ap, idx);
  // Ordering and symbolic analysis.
  const choice = opts.ordering ?? "auto";
  let ordering: OrderingName;
  let symbolic: Symbolic;
  if (choice === "auto") {
    // The natural order when it has no fill at all (an O(nnz) test, exact), else DEFAULT_ORDERING.
    if (naturalHasNoFill(rows, adj.p, adj.i)) {
      ordering = "natural";
      symbolic = analyse(rows, adj.p, adj.i, natural(rows), { kernel: opts.kernel === "supernodal" ? "supernodal" : "simple" });
    } else {
      ordering = DEFAULT_ORDERING;
      symbolic = analyse(rows, adj.p, adj.i, orderBy(ordering, rows, adj.p, adj.i), { kernel: opts.kernel });
    }
  } else {
    ordering = choice;
    symbolic = analyse(rows, adj.p, adj.i, orderBy(choice, rows, adj.p, adj.i), { kernel: opts.kernel });
  }
  // Permuted triangle: a diagonal entry per column and one off-diagonal entry
  // per device between two internal rows (parallel devices give repeated
  // entries, which every kernel sums), in the column the triangle puts it.
  const lower = matrixTriangle(symbolic) === "lower";
  const pinv = symbolic.pinv;
  const colCount = new Int32Array(rows).fill(1);
  for (let d = 0; d < m; d++) {
    const a = rowOf[source[d]];
    const b = rowOf[drain[d]];
    if (a < 0 || b < 0 || a === b) continue;
    const pa = pinv[a];
    const pb = pinv[b];
    colCount[lower ? (pa < pb ? pa : pb) : pa > pb ? pa : pb]++;
  }
  const cp = new Int32Array(rows + 1);
  cumsum(cp, colCount, rows);
  const ci = new Int32Array(cp[rows]);
  const cx = new Float64Array(cp[rows]);
  const diagPos = new Int32Array(rows);
  for (let c = 0; c < rows; c++) {
    diagPos[c] = colCount[c]++;
    ci[diagPos[c]] = c;
  }
  for (let r = 0; r < rows; r++) rowDiag[r] = diagPos[pinv[r]];
  const posOff = new Int32Array(m).fill(-1);
  for (let d = 0; d < m; d++) {
    // A channel from a node to itself carries no current: no entry.
    if (source[d] === drain[d]) continue;
    const a = rowOf[source[d]];
    const b = rowOf[drain[d]];
    if (a < 0 || b < 0) continue;
    const pa = pinv[a];
    const pb = pinv[b];
    const col = lower ? (pa < pb ? pa : pb) : pa > pb ? pa : pb;
    const slot = colCount[col]++;
    ci[slot] = col === pa ? pb : pa;
    posOff[d] = slot;
  }
  return { ordering, symbolic, C: { m: rows, n: rows, p: cp, i: ci, x: cx }, posOff };
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
  plan.solved = false;
  // Reference voltages: lowest rail under an n-channel terminal, highest under a p-channel one.
  let vrefN = Infinity;
  let vrefP = -Infinity;
  let lamN = -Infinity;
  let lamP = -Infinity;
  const rowOf = plan.rowOf;
  const { keyType, keyGate, keyBulk, railNodes, nodeTouch } = plan;
  for (let k = 0; k < keyType.length; k++) {
    const b = keyBulk[k];
    const vb = b >= 0 ? V[b] : 0;
    const vg = V[keyGate[k]];
    if (keyType[k] === N_TYPE) {
      const e = (kappa * (vg - vb) + vb) / ut;
      if (e > lamN) lamN = e;
    } else {
      const e = (kappa * (vb - vg) - vb) / ut;
      if (e > lamP) lamP = e;
    }
  }
  for (let q = 0; q < railNodes.length; q++) {
    const r = railNodes[q];
    const v = V[r];
    if (nodeTouch[r] & 1 && v < vrefN) vrefN = v;
    if (nodeTouch[r] & 2 && v > vrefP) vrefP = v;
  }
  if (!Number.isFinite(vrefN)) vrefN = 0;
  if (!Number.isFinite(vrefP)) vrefP = 0;
  if (!Number.isFinite(lamN)) lamN = 0;
  if (!Number.isFinite(lamP)) lamP = 0;
  const lnI0 = Math.log(P.i0);
  plan.vref[0] = vrefP;
  plan.vref[1] = vrefN;
  // ln gs_c = ln i0 + Λ_c + ln u(Vref_c)
  plan.lnScale[0] = lnI0 + lamP + vrefP / ut;
  plan.lnScale[1] = lnI0 + lamN - vrefN / ut;
  const cx = plan.C.x as Float64Array;
  cx.fill(0);
  const rhs = plan.rhsRails;
  rhs.fill(0);
  // û(rail q) = exp(∓(V − Vref)/U_T) ≤ 1, once per rail and polarity.
  const uRail = plan.uRail;
  for (let q = 0; q < railNodes.length; q++) {
    const v = V[railNodes[q]];
    uRail[2 * q] = Math.exp(-(v - vrefN) / ut);
    uRail[2 * q + 1] = Math.exp((v - vrefP) / ut);
  }
  const { rowDiag, posOff } = plan;
  const pinv = plan.symbolic.pinv;
  const size = P.size;
  const cOut = plan.c;
  const gsN = Math.exp(plan.lnScale[1]);
  const gsP = Math.exp(plan.lnScale[0]);
  // Gate factor exp(e − Λ_c), cached per gate rail (and well, for a pfet) within this factorisation.
  const stamp = ++plan.stamp;
  const { gateStamp, gateValue, gateWell } = plan;
  for (let d = 0; d < m; d++) {
    const isN = type[d] === N_TYPE;
    const gn = gate[d];
    const gq = -1 - rowOf[gn];
    const b = bulk[d];
    let f: number;
    if ((isN && b >= 0) || gq < 0) {
      const vb = b >= 0 ? V[b] : 0;
      f = Math.exp(isN ? (kappa * (V[gn] - vb) + vb) / ut - lamN : (kappa * (vb - V[gn]) - vb) / ut - lamP);
    } else if (gateStamp[gq] === stamp && gateWell[gq] === (isN ? -1 : b)) f = gateValue[gq];
    else {
      const vb = b >= 0 ? V[b] : 0;
      f = Math.exp(isN ? (kappa * V[gn]) / ut - lamN : (kappa * (vb - V[gn]) - vb) / ut - lamP);
      if (gateStamp[gq] !== stamp) {
        gateStamp[gq] = stamp;
        gateWell[gq] = isN ? -1 : b;
        gateValue[gq] = f;
      }
    }
    // ĝ = (W/L)·e^{−κ·dVT/U_T}·exp(e − Λ_c)
    const g = size[d] * f;
    cOut[d] = g * (isN ? gsN : gsP);
    const s = source[d];
    const t = drain[d];
    // A channel from a node to itself carries no current: no entry.
    if (s === t) continue;
    const ra = rowOf[s];
    const rb = rowOf[t];
    if (ra >= 0 && rb >= 0) {
      const da = rowDiag[ra];
      const db = rowDiag[rb];
      cx[da] += g;
      cx[db] += g;
      cx[posOff ? posOff[d] : (da < db ? da : db) + 1] -= g;
    } else if (ra >= 0) {
      cx[rowDiag[ra]] += g;
      rhs[pinv[ra]] += g * uRail[2 * (-1 - rb) + (isN ? 0 : 1)];
    } else if (rb >= 0) {
      cx[rowDiag[rb]] += g;
      rhs[pinv[rb]] += g * uRail[2 * (-1 - ra) + (isN ? 0 : 1)];
    }
  }
  const S = plan.symbolic;
  // A forest without refinement factors in place (C is not read again before the next refill).
  const inPlace = S.kernel === "tree" && plan.refine === 0;
  const into = plan.factor ?? (inPlace ? { n: S.n, kernel: "simple" as const, lp: S.lp, li: plan.C.i, lx: cx, supernodes: null } : undefined);
  const res = cholesky(plan.C, S, into, plan.work);
  if (!res.ok) {
    plan.factor = null;
    const node = plan.nodeOfRow[plan.symbolic.perm[res.column]];
    return { ok: false, node, message: `the linear system is singular at node ${net.nodes.names[node]} (pivot ${res.pivot.toPrecision(3)}); it has no conductance to a rail` };
  }
  plan.factor = res.factor;
  plan.sup.fresh = true;
  return { ok: true };
}

/** out = P·b (permuted, scaled): the rails' part (when withRails) + the injects with value(j). */
function buildRhs(plan: LinearPlan, net: Network, withRails: boolean, value: (j: number) => number, out: Float64Array): Float64Array {
  if (withRails) out.set(plan.rhsRails);
  else out.fill(0);
  const { rowOf, rowIsN } = plan;
  const pinv = plan.symbolic.pinv;
  const { injects } = net;
  // Injects: drawn out of an n-channel node, pushed into a p-channel node.
  const invN = Math.exp(-plan.lnScale[1]);
  const invP = Math.exp(-plan.lnScale[0]);
  for (let j = 0; j < injects.count; j++) {
    const v = value(j);
    if (v === 0) continue;
    const rf = rowOf[injects.from[j]];
    const rt = rowOf[injects.to[j]];
    if (rf >= 0) out[pinv[rf]] += rowIsN[rf] ? v * invN : -v * invP;
    if (rt >= 0) out[pinv[rt]] += rowIsN[rt] ? -v * invN : v * invP;
  }
  return out;
}

/** y = C⁻¹·y in permuted order (y holds P·b on entry): y = L \ y; y = Lᵀ \ y; then refinement steps (r = P·b − C·y). */
function solvePermuted(plan: LinearPlan, y: Float64Array): void {
  const factor = plan.factor as Factor;
  const rows = plan.rows;
  const refine = plan.refine;
  if (refine > 0) {
    if (plan.r.length !== rows) plan.r = new Float64Array(rows);
    if (plan.b.length !== rows) plan.b = new Float64Array(rows);
    plan.b.set(y);
  }
  lsolve(factor, y);
  ltsolve(factor, y);
  const r = plan.r;
  const b = plan.b;
  for (let step = 0; step < refine; step++) {
    multiplySymmetric(plan.C, y, r);
    for (let k = 0; k < rows; k++) r[k] = b[k] - r[k];
    lsolve(factor, r);
    ltsolve(factor, r);
    for (let k = 0; k < rows; k++) y[k] += r[k];
  }
}

/**
 * Node voltages for the current inject values, with the last factorisation
 * (by superposition when only a few inject values changed since it).
 * Writes every node of V (rails at their values). û ≤ 0 at a node means its
 * current sources ask more than its channels can carry: no physical operating
 * point, reported naming the node.
 */
export function solveLinear(plan: LinearPlan, net: Network, V: Float64Array): { ok: true } | LinearFailure {
  if (!plan.factor) throw new Error("solveLinear: no factorisation");
  plan.solved = false;
  const { rows, rowIsN, nodeOfRow } = plan;
  const { injects, nodes, settings } = net;
  const values = injects.value;
  const ut = settings.ut;
  const y = plan.y;
  const sup = plan.sup;
  const all = (j: number) => values[j];
  if (sup.fresh || sup.disabled) {
    solvePermuted(plan, buildRhs(plan, net, true, all, y));
    if (sup.fresh) {
      sup.fresh = false;
      sup.disabled = false;
      sup.ref.set(values);
      sup.isChanged.fill(0);
      sup.changed = [];
      sup.z = [];
    }
  } else {
    const before = sup.changed.length;
    for (let j = 0; j < injects.count && !sup.disabled; j++) {
      if (values[j] === sup.ref[j] || sup.isChanged[j]) continue;
      if (sup.changed.length >= MAX_SUPERPOSED) sup.disabled = true;
      else {
        sup.isChanged[j] = 1;
        sup.changed.push(j);
      }
    }
    if (sup.disabled) {
      solvePermuted(plan, buildRhs(plan, net, true, all, y));
    } else {
      if (sup.changed.length > before) {
        // rest: rails and the injects still at their reference values; z_j: 1 A in inject j.
        if (sup.rest.length !== rows) sup.rest = new Float64Array(rows);
        solvePermuted(plan, buildRhs(plan, net, true, (j) => (sup.isChanged[j] ? 0 : sup.ref[j]), sup.rest));
        for (let t = before; t < sup.changed.length; t++) {
          const jj = sup.changed[t];
          const z = new Float64Array(rows);
          solvePermuted(plan, buildRhs(plan, net, false, (j) => (j === jj ? 1 : 0), z));
          sup.z.push(z);
        }
      }
      y.set(sup.rest);
      for (let t = 0; t < sup.changed.length; t++) {
        const v = values[sup.changed[t]];
        if (v === 0) continue;
        const z = sup.z[t];
        for (let k = 0; k < rows; k++) y[k] += v * z[k];
      }
    }
  }
  const perm = plan.symbolic.perm;
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
  const railNodes = plan.railNodes;
  for (let q = 0; q < railNodes.length; q++) V[railNodes[q]] = rv[railNodes[q]];
  plan.solved = worst < 0;
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

/**
 * The per-node exponentials of the voltage-form device equation for the last
 * factorisation (in scratch arrays of the plan, valid until the next call): en[k] = exp(−(V_k − Vref_n)/U_T), ep[k] = exp((V_k − Vref_p)/U_T)
 * at the nodes channels of that type touch; with plan.c they give
 * I_F = c·e(source), I_R = c·e(drain) (LANGUAGE.md device equations).
 * V must be the voltages the last solveLinear wrote. At an internal node
 * that exponential is the solved pseudo-voltage û itself (V = Vref ∓ U_T·ln û),
 * taken straight from the solve when it is at hand; rails (and any other
 * case) by the exponential.
 */
export function pseudoCurrents(plan: LinearPlan, net: Network, V: Float64Array): { c: Float64Array; en: Float64Array; ep: Float64Array } | null {
  const ut = net.settings.ut;
  if (!(Math.abs(plan.lnScale[0]) < 700 && Math.abs(plan.lnScale[1]) < 700)) return null;
  const nn = V.length;
  if (plan.en.length !== nn) {
    plan.en = new Float64Array(nn);
    plan.ep = new Float64Array(nn);
  }
  const { en, ep } = plan;
  const vrefN = plan.vref[1];
  const vrefP = plan.vref[0];
  const touch = plan.nodeTouch;
  if (plan.solved) {
    const { y, rows, nodeOfRow, rowIsN } = plan;
    const perm = plan.symbolic.perm;
    for (let k = 0; k < rows; k++) {
      const r = perm[k];
      if (rowIsN[r]) en[nodeOfRow[r]] = y[k];
      else ep[nodeOfRow[r]] = y[k];
    }
    const railNodes = plan.railNodes;
    for (let q = 0; q < railNodes.length; q++) {
      const k = railNodes[q];
      const t = touch[k];
      if (t & 1) en[k] = Math.exp(-(V[k] - vrefN) / ut);
      if (t & 2) ep[k] = Math.exp((V[k] - vrefP) / ut);
    }
    return { c: plan.c, en, ep };
  }
  for (let k = 0; k < nn; k++) {
    const t = touch[k];
    if (t & 1) en[k] = Math.exp(-(V[k] - vrefN) / ut);
    if (t & 2) ep[k] = Math.exp((V[k] - vrefP) / ut);
  }
  return { c: plan.c, en, ep };
}
