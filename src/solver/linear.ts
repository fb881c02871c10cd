/**
 * The exact DC solve of a linear-class network in pseudo-voltages
 * (Vittoz & Arreguit 1993; docs/physics.md §3 Pseudo-voltages).
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
 * polarity class c, u is measured from a reference voltage Vref_c — the
 * class's extreme rail, or beyond it where an inject holds a node far past
 * every rail (û = u/u(Vref_c) ≤ 1 on every rail either way) — and
 * conductances are divided by gs_c = i0·exp(Λ_c)·u(Vref_c), Λ_c the largest
 * gate exponent of the class.
 *
 * Phases: `planLinear` (structure: graph, ordering, symbolic analysis, the
 * device → matrix-entry maps) once per run; `factorLinear` (conductances,
 * numeric Cholesky, rail right-hand side) when rails, sizes, temperature,
 * kappa or mismatch change; `solvePseudo` (injects, triangular solves — or
 * superposition of cached responses when only inject values changed) for
 * every point; then the point's evaluation: `voltagesLinear` (back to node
 * voltages, a logarithm per node, and the check that every û is positive)
 * and `evaluateLinear` (linear-eval.ts: currents and flags from the solved
 * pseudo-voltages); `solveLinear` is solvePseudo + voltagesLinear.
 * `releaseLinear` gives the plan's work arrays back to the thread's pool
 * (pool.ts) when the run ends.
 *
 * Two structures:
 * - a forest (chains, trees: no cycle, no parallel devices): leaves first,
 *   no fill, the factor is two numbers per row (tree.ts) and nothing else is
 *   analysed;
 * - anything else: adjacency graph, fill-reducing ordering, symbolic
 *   analysis and a sparse Cholesky factor (symbolic.ts, cholesky.ts).
 * Rows are kept in elimination order throughout: `prow` maps a node straight
 * to its permuted row, and the planning pass (linear-plan.ts) writes one packed table of
 * three integers per device (source end, drain end, gate key), so the
 * per-point loops read one device array instead of five (each typed array a
 * loop touches costs a few loads and checks per iteration in V8's optimised
 * code, measured at about 1 ns: bench/README numbers).
 */

import { type Network, NFET } from "../lang/network";
import { JUNCTION_TOLERANCE } from "../lang/vocabulary";
import { cholesky, emptyFactor, type Factor } from "./cholesky";
import type { DeviceParams } from "./device";
import {
  dropParts,
  type GeneralParts,
  type LinearFailure,
  type LinearPlan,
  MAX_SUPERPOSED,
  type Superposition,
} from "./linear-plan";
import { pool } from "./pool";
import { lsolve, ltsolve } from "./triangular";
import { treeFactor, treeSolve } from "./tree";

export {
  DEFAULT_ORDERING,
  type LinearFailure,
  type LinearOptions,
  type LinearPlan,
  type OrderingChoice,
  planLinear,
  releaseLinear,
  type SuperposedParts,
} from "./linear-plan";

/**
 * Conductances, numeric factorisation and the rails' right-hand side for the
 * network's current rail values, sizes, settings and device constants P.
 * On a non-positive pivot, names the node (cannot happen for a valid linear
 * network; reported rather than thrown).
 */
export function factorLinear(plan: LinearPlan, net: Network, P: DeviceParams): { ok: true } | LinearFailure {
  plan.pseudo = false;
  plan.factored = false;
  scaleAndGates(plan, net, P);
  const rhs = plan.rhsRails;
  rhs.fill(0);
  // Sizes: (W/L)·e^{−κ·dVT/U_T} with mismatch, else W/L from w and l (no per-run array).
  const sizeOrW = P.size ?? P.w;
  const l = P.size ? null : P.l;
  let failed = -1;
  if (plan.tree) {
    const { parent, diag, off } = plan.tree;
    diag.fill(0);
    off.fill(0);
    assembleTree(plan.pack, sizeOrW, l, plan.keyFactor, plan.c, plan.y, diag, off, rhs);
    failed = treeFactor(parent, diag, off);
  } else {
    const g = plan.general as GeneralParts;
    const cx = g.C.x as Float64Array;
    cx.fill(0);
    assembleGeneral(plan.pack, sizeOrW, l, plan.keyFactor, plan.c, plan.y, g.diagPos, g.posOff, cx, rhs);
    const res = cholesky(g.C, g.symbolic, g.factor ?? emptyFactor(g.symbolic, g.arena), g.work);
    if (res.ok) g.factor = res.factor;
    else {
      g.factor = null;
      failed = res.column;
    }
  }
  if (failed >= 0) {
    const node = plan.nodeAt[failed];
    return { ok: false, node, message: lostPivot(plan, net, failed) };
  }
  plan.factored = true;
  plan.sup.fresh = true;
  return { ok: true };
}

/** Decades of conductance double precision resolves in one sum (about 15.95: 1/ε = 4.5e15). */
const RESOLVED_DECADES = -Math.log10(Number.EPSILON);

/**
 * Why the factorisation met a pivot that is not positive at `row`. Every
 * node of a network that passed classification reaches a rail through
 * channels, so the matrix is positive definite: a lost pivot means the
 * conductances meeting there (or anywhere in the network) span more decades
 * than double precision resolves — a conductance to a rail, added to one
 * 1e17 times larger, leaves no trace in their sum. Says so, naming the two
 * devices.
 */
function lostPivot(plan: LinearPlan, net: Network, row: number): string {
  const { pack, c } = plan;
  const span = (touching: boolean): { lo: number; hi: number } => {
    let lo = -1;
    let hi = -1;
    for (let d = 0, q = 0; d < c.length; d++, q += 3) {
      if (touching && pack[q] !== row && pack[q + 1] !== row) continue;
      if (pack[q] === pack[q + 1] || !(c[d] > 0)) continue;
      if (lo < 0 || c[d] < c[lo]) lo = d;
      if (hi < 0 || c[d] > c[hi]) hi = d;
    }
    return { lo, hi };
  };
  const name = net.nodes.names[plan.nodeAt[row]];
  for (const touching of [true, false]) {
    const { lo, hi } = span(touching);
    if (lo < 0) continue;
    const decades = Math.log10(c[hi] / c[lo]);
    if (decades < RESOLVED_DECADES - 1) continue;
    const names = net.devices.names;
    return `results not reliable: the elimination lost its pivot at node ${name}, which does reach a rail: ${touching ? "its" : "the network's"} channel conductances span ${decades.toFixed(1)} decades (${names[hi]} against ${names[lo]}), more than double precision resolves (about ${RESOLVED_DECADES.toFixed(0)}): a gate far above the others makes a conductance beside which the rest vanish`;
  }
  return `the linear system is singular at node ${name}; it has no conductance to a rail`;
}

/**
 * Scaling of this factorisation (reference voltages, largest gate exponent
 * Λ per class, ln gs), the rails' pseudo-voltages û and each gate key's factor exp(e − Λ_c).
 */
function scaleAndGates(plan: LinearPlan, net: Network, P: DeviceParams): void {
  const V = net.nodes.railValue;
  const { ut, kappa } = P;
  // Reference voltages: lowest rail under an n-channel terminal, highest under a p-channel one.
  let vrefN = Infinity;
  let vrefP = -Infinity;
  let lamN = -Infinity;
  let lamP = -Infinity;
  const { keyType, keyGate, keyBulk, keyFactor, railNodes, railTouch, y, rows } = plan;
  // Gate exponents: nfet (κ(Vg − Vb) + Vb)/U_T, pfet (κ(Vw − Vg) − Vw)/U_T.
  for (let k = 0; k < keyType.length; k++) {
    const b = keyBulk[k];
    const vb = b >= 0 ? V[b] : 0;
    const vg = V[keyGate[k]];
    if (keyType[k] === NFET) {
      const e = (kappa * (vg - vb) + vb) / ut;
      keyFactor[k] = e;
      if (e > lamN) lamN = e;
    } else {
      const e = (kappa * (vb - vg) - vb) / ut;
      keyFactor[k] = e;
      if (e > lamP) lamP = e;
    }
  }
  for (let q = 0; q < railNodes.length; q++) {
    const v = V[railNodes[q]];
    if (railTouch[q] & 1 && v < vrefN) vrefN = v;
    if (railTouch[q] & 2 && v > vrefP) vrefP = v;
  }
  if (!Number.isFinite(lamN)) lamN = 0;
  if (!Number.isFinite(lamP)) lamP = 0;
  for (let k = 0; k < keyType.length; k++) keyFactor[k] = Math.exp(keyFactor[k] - (keyType[k] === NFET ? lamN : lamP));
  const lnI0 = Math.log(P.i0);
  // A node an inject of I amperes holds through the strongest gate sits near
  // V = U_T·(ln i0 + Λ_c − ln I) (n; p mirrored), which can be far beyond every
  // rail (a drain rail 20 V up, a sink below it): the reference goes there then,
  // so that such nodes' û stay near 1 and far rails' û vanish, not the reverse.
  // (A node's net inject: injects that cancel there hold it nowhere.)
  const { injects } = net;
  const { prow, isNAt } = plan;
  let injN = 0;
  let injP = 0;
  if (injects.count > 0) {
    const net = new Float64Array(rows);
    for (let j = 0; j < injects.count; j++) {
      const v = injects.value[j];
      const rf = prow[injects.from[j]];
      const rt = prow[injects.to[j]];
      if (rf >= 0) net[rf] -= v;
      if (rt >= 0) net[rt] += v;
    }
    for (let r = 0; r < rows; r++) {
      const v = Math.abs(net[r]);
      if (isNAt[r]) injN = Math.max(injN, v);
      else injP = Math.max(injP, v);
    }
  }
  if (injN > 0) vrefN = Math.min(vrefN, ut * (lnI0 + lamN - Math.log(injN)));
  if (injP > 0) vrefP = Math.max(vrefP, -ut * (lnI0 + lamP - Math.log(injP)));
  if (!Number.isFinite(vrefN)) vrefN = 0;
  if (!Number.isFinite(vrefP)) vrefP = 0;
  plan.vref[0] = vrefP;
  plan.vref[1] = vrefN;
  // ln gs_c = ln i0 + Λ_c + ln u(Vref_c)
  plan.lnScale[0] = lnI0 + lamP + vrefP / ut;
  plan.lnScale[1] = lnI0 + lamN - vrefN / ut;
  // Forward bias by more than the tolerance: nfet V < Vb − tol, pfet V > Vw + tol.
  const { keyJunction } = plan;
  for (let k = 0; k < keyType.length; k++) {
    const b = keyBulk[k];
    const vb = b >= 0 ? V[b] : 0;
    keyJunction[k] =
      keyType[k] === NFET
        ? Math.exp(-(vb - JUNCTION_TOLERANCE - vrefN) / ut)
        : Math.exp((vb + JUNCTION_TOLERANCE - vrefP) / ut);
  }
  // û(rail q) = exp(∓(V − Vref)/U_T) ≤ 1, once per rail and polarity.
  for (let q = 0; q < railNodes.length; q++) {
    const v = V[railNodes[q]];
    y[rows + 2 * q] = Math.exp(-(v - vrefN) / ut);
    y[rows + 2 * q + 1] = Math.exp((v - vrefP) / ut);
  }
}

/**
 * A forest's system, with each device's ĝ = size·exp(e − Λ_c) (its gate
 * key's factor) written into c on the way — one pass over the devices, as
 * the device table is the largest thing a factorisation reads (size is
 * (W/L)·e^{−κ·dVT/U_T} when `l` is null, else W/L from w = size and l).
 * A device between two rows goes into the diagonal of both and into off at
 * the lower row (the child: its entry of L); a device from a row to a rail
 * into the row's diagonal and the rails' right-hand side (y beyond the rows
 * holds the rails' û).
 */
function assembleTree(
  pack: Int32Array,
  size: Float64Array,
  l: Float64Array | null,
  keyFactor: Float64Array,
  c: Float64Array,
  y: Float64Array,
  diag: Float64Array,
  off: Float64Array,
  rhs: Float64Array,
): void {
  const m = c.length;
  const rows = diag.length;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    const g = (l === null ? size[d] : size[d] / l[d]) * keyFactor[pack[q + 2] >> 1];
    c[d] = g;
    if (a === b) continue;
    if (a < rows) {
      diag[a] += g;
      if (b < rows) {
        diag[b] += g;
        off[a < b ? a : b] -= g;
      } else rhs[a] += g * y[b];
    } else if (b < rows) {
      diag[b] += g;
      rhs[b] += g * y[a];
    }
  }
}

/**
 * The general system into the permuted triangle's values cx (diagonals at
 * diagPos, a device's entry at posOff). The same walk as assembleTree with two
 * index maps more; kept as its own loop so that a forest needs no per-device
 * map (8 MB for the million-node chain) and each loop stays monomorphic.
 */
function assembleGeneral(
  pack: Int32Array,
  size: Float64Array,
  l: Float64Array | null,
  keyFactor: Float64Array,
  c: Float64Array,
  y: Float64Array,
  diagPos: Int32Array,
  posOff: Int32Array,
  cx: Float64Array,
  rhs: Float64Array,
): void {
  const m = c.length;
  const rows = diagPos.length;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    const g = (l === null ? size[d] : size[d] / l[d]) * keyFactor[pack[q + 2] >> 1];
    c[d] = g;
    if (a === b) continue;
    if (a < rows) {
      cx[diagPos[a]] += g;
      if (b < rows) {
        cx[diagPos[b]] += g;
        cx[posOff[d]] -= g;
      } else rhs[a] += g * y[b];
    } else if (b < rows) {
      cx[diagPos[b]] += g;
      rhs[b] += g * y[a];
    }
  }
}

/**
 * out = P·b (scaled, by row): the injects with value(j), then (when
 * withRails) the rails' part added to their sum. Injects first: injects that
 * cancel at a node sum to exactly zero there, and the rail's term — which can
 * be 1e-26 of one inject when the rail is far above the reference — survives
 * (added to one inject first, it would be lost in the rounding of the sum).
 * Injects that cancel to within rounding of their magnitudes count as
 * cancelling: their sum is below what the values themselves resolve.
 */
function buildRhs(
  plan: LinearPlan,
  net: Network,
  withRails: boolean,
  value: (j: number) => number,
  out: Float64Array,
): Float64Array {
  const rows = plan.rows;
  out.fill(0, 0, rows);
  const { prow, isNAt } = plan;
  const { injects } = net;
  // Injects: drawn out of an n-channel node, pushed into a p-channel node.
  const invN = Math.exp(-plan.lnScale[1]);
  const invP = Math.exp(-plan.lnScale[0]);
  let magnitudes: Float64Array | null = null;
  for (let j = 0; j < injects.count; j++) {
    const v = value(j);
    if (v === 0) continue;
    const rf = prow[injects.from[j]];
    const rt = prow[injects.to[j]];
    for (let end = 0; end < 2; end++) {
      const r = end === 0 ? rf : rt;
      if (r < 0) continue;
      const t = (end === 0) === (isNAt[r] === 1) ? v * (isNAt[r] ? invN : invP) : -v * (isNAt[r] ? invN : invP);
      if (out[r] !== 0 || magnitudes) {
        // A second inject at this row: keep the sum of magnitudes to tell cancellation from a small sum.
        magnitudes ??= new Float64Array(rows);
        if (magnitudes[r] === 0) magnitudes[r] = Math.abs(out[r]);
      }
      out[r] += t;
      if (magnitudes) magnitudes[r] += Math.abs(t);
    }
  }
  if (magnitudes) {
    const ulps = 8 * Number.EPSILON;
    for (let r = 0; r < rows; r++) if (Math.abs(out[r]) <= ulps * magnitudes[r]) out[r] = 0;
  }
  if (withRails) {
    const rails = plan.rhsRails;
    for (let r = 0; r < rows; r++) out[r] += rails[r];
  }
  return out;
}

/**
 * x = A⁻¹·y in place for any right-hand side y (by row, scaled as the plan's
 * system) with the last factorisation: the adjoint solves of sensitivity.ts
 * (A is symmetric, so Aᵀ's solve is A's).
 */
export function solveWithFactor(plan: LinearPlan, y: Float64Array): void {
  if (!plan.factored) throw new Error("solveWithFactor: no factorisation");
  solveRows(plan, y);
}

function solveRows(plan: LinearPlan, y: Float64Array): void {
  const rows = plan.rows;
  const refine = plan.refine;
  if (refine > 0) {
    if (plan.r.length !== rows) plan.r = pool.takeF64(rows);
    if (plan.b.length !== rows) plan.b = pool.takeF64(rows);
    plan.b.set(y.subarray(0, rows));
  }
  factorSolve(plan, y);
  const { r, b } = plan;
  for (let step = 0; step < refine; step++) {
    multiplyRows(plan, y, r);
    for (let k = 0; k < rows; k++) r[k] = b[k] - r[k];
    factorSolve(plan, r);
    for (let k = 0; k < rows; k++) y[k] += r[k];
  }
}

function factorSolve(plan: LinearPlan, y: Float64Array): void {
  if (plan.tree) treeSolve(plan.tree.parent, plan.tree.diag, plan.tree.off, y);
  else {
    const factor = (plan.general as GeneralParts).factor as Factor;
    lsolve(factor, y);
    ltsolve(factor, y);
  }
}

/** out = C·y by row, from the devices (the matrix itself is overwritten by its factor). */
function multiplyRows(plan: LinearPlan, y: Float64Array, out: Float64Array): void {
  const { pack, c, rows } = plan;
  const m = c.length;
  out.fill(0);
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a === b) continue;
    const g = c[d];
    if (a < rows && b < rows) {
      const f = g * (y[a] - y[b]);
      out[a] += f;
      out[b] -= f;
    } else if (a < rows) out[a] += g * y[a];
    else if (b < rows) out[b] += g * y[b];
  }
}
/**
 * Node voltages for the current inject values, with the last factorisation:
 * solvePseudo, then voltagesLinear.
 */
export function solveLinear(plan: LinearPlan, net: Network, V: Float64Array): { ok: true } | LinearFailure {
  solvePseudo(plan, net);
  return voltagesLinear(plan, net, V);
}

/**
 * The linear solve proper: the pseudo-voltages û of every row into plan.y for
 * the current inject values, with the last factorisation (by superposition
 * when only a few inject values changed since it). Their mapping back to
 * node voltages (a logarithm per node) is voltagesLinear's.
 */
export function solvePseudo(plan: LinearPlan, net: Network): void {
  if (!plan.factored) throw new Error("solvePseudo: no factorisation");
  plan.pseudo = false;
  const rows = plan.rows;
  const { injects } = net;
  const values = injects.value;
  const y = plan.y;
  const sup = plan.sup;
  sup.used = false;
  const all = (j: number) => values[j];
  if (sup.fresh || sup.disabled) {
    solveRows(plan, buildRhs(plan, net, true, all, y));
    if (sup.fresh) {
      sup.fresh = false;
      sup.disabled = false;
      sup.ref.set(values);
      sup.isChanged.fill(0);
      sup.changed = [];
      pool.give(...sup.z);
      sup.z = [];
      dropParts(sup);
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
      solveRows(plan, buildRhs(plan, net, true, all, y));
    } else {
      if (sup.changed.length > before) {
        dropParts(sup);
        // rest: rails and the injects still at their reference values; z_j: 1 A in inject j.
        if (sup.rest.length !== rows) sup.rest = pool.takeF64(rows);
        solveRows(
          plan,
          buildRhs(plan, net, true, (j) => (sup.isChanged[j] ? 0 : sup.ref[j]), sup.rest),
        );
        for (let t = before; t < sup.changed.length; t++) {
          const jj = sup.changed[t];
          const z = pool.takeF64(rows);
          solveRows(
            plan,
            buildRhs(plan, net, false, (j) => (j === jj ? 1 : 0), z),
          );
          sup.z.push(z);
        }
      }
      // (No inject changed since the fresh solve: y still holds its solution.)
      if (sup.changed.length > 0) superpose(sup, values, y, rows);
      sup.used = true;
    }
  }
  plan.pseudo = true;
}

/**
 * û = Σ_j v_j·z_j + rest: the changed injects' part first, then rest (as
 * buildRhs adds the rails last: injects that cancel leave its part whole).
 */
function superpose(sup: Superposition, values: Float64Array, y: Float64Array, rows: number): void {
  y.fill(0, 0, rows);
  for (let t = 0; t < sup.changed.length; t++) {
    const v = values[sup.changed[t]];
    if (v === 0) continue;
    const z = sup.z[t];
    for (let k = 0; k < rows; k++) y[k] += v * z[k];
  }
  const rest = sup.rest;
  for (let k = 0; k < rows; k++) y[k] += rest[k];
}

/**
 * Node voltages V = Vref ∓ U_T·ln û from the pseudo-voltages of the last
 * solvePseudo; writes every node of V (rails at their values). û ≤ 0 at a
 * node means its current sources ask more than its channels can carry: no
 * physical operating point, reported naming the node.
 */
export function voltagesLinear(plan: LinearPlan, net: Network, V: Float64Array): { ok: true } | LinearFailure {
  if (!plan.pseudo) throw new Error("voltagesLinear: no solve since the last factorisation");
  const { rows, isNAt, nodeAt, y } = plan;
  const { nodes, settings } = net;
  const vrefN = plan.vref[1];
  const vrefP = plan.vref[0];
  const worst = voltagesFromRows(rows, y, nodeAt, isNAt, vrefN, vrefP, settings.ut, V);
  const rv = nodes.railValue;
  const railNodes = plan.railNodes;
  for (let q = 0; q < railNodes.length; q++) V[railNodes[q]] = rv[railNodes[q]];
  if (worst >= 0) {
    const node = nodeAt[worst];
    const name = nodes.names[node];
    return {
      ok: false,
      node,
      message: `no physical operating point: at node ${name} the current sources ask more than the channels can carry (pseudo-voltage ${isNAt[worst] ? "exp(-V/ut)" : "exp(V/ut)"} would be ${Number.isNaN(y[worst]) ? "undefined" : "≤ 0"})`,
    };
  }
  return { ok: true };
}

/**
 * V = Vref ∓ U_T·ln û for every row; returns −1, or the row whose û is the
 * most negative (or not a number / infinite) when some û is not a positive finite number.
 */
function voltagesFromRows(
  rows: number,
  y: Float64Array,
  nodeAt: Int32Array,
  isNAt: Uint8Array,
  vrefN: number,
  vrefP: number,
  ut: number,
  V: Float64Array,
): number {
  let worst = -1;
  let worstU = Infinity;
  for (let k = 0; k < rows; k++) {
    const u = y[k];
    if (!(u > 0) || u === Infinity) {
      if (!(u >= worstU)) {
        worstU = u;
        worst = k;
      }
      continue;
    }
    const lu = ut * Math.log(u);
    V[nodeAt[k]] = isNAt[k] ? vrefN - lu : vrefP + lu;
  }
  return worst;
}
