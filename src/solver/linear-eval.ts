/**
 * The evaluation of a linear-class point from its solved pseudo-voltages:
 * every device's current, saturation, inversion coefficient and junction
 * check, every rail's current and the KCL residual — the same quantities as
 * evaluate.ts `evaluate`, from the same device equation (docs/language.md, Device equations):
 *
 *   I = i0·(W/L)·e^{−κ·dVT/U_T}·exp(κ·Vg/U_T)·(exp(−Vs/U_T) − exp(−Vd/U_T))
 *     = gs_c·ĝ·(û_s − û_d)                              (linear.ts scaling)
 *
 * with û the solved pseudo-voltage of an internal node or of a rail (the
 * plan's y, indexed by the packed device ends). The voltage form of the same check is exact in û:
 *   saturated:   V_DS > 4·U_T  ⟺  û_d < e^{−4}·û_s   (pfet: V_SD, same form);
 *   junction:    a source or drain beyond its bulk/well by more than the
 *                tolerance  ⟺  max(û_s, û_d) above the key's threshold.
 * No exponential or logarithm per device, and the loop reads the plan's
 * packed ends (one device array) instead of the network's five.
 */

import type { Network } from "../lang/network";
import { WEAK_INVERSION_IC } from "../lang/vocabulary";
import type { LinearPlan, SuperposedParts } from "./linear";
import { pool } from "./pool";
import { currentScale, EvalStats, KCL_LIMIT, noIc, validityWarnings } from "./evaluate";
import type { Evaluation, PointStorage } from "./results";

/** e^{−4}: V_DS > 4·U_T in pseudo-voltages. */
const E4 = Math.exp(-4);

/**
 * Evaluates the point the last successful solveLinear of `plan` solved
 * (V: its node voltages) into `out`. railCurrents is NaN at internal nodes.
 */
export function evaluateLinear(plan: LinearPlan, net: Network, V: Float64Array, out: PointStorage): Evaluation {
  const { devices, injects, settings } = net;
  const m = devices.count;
  const rows = plan.rows;
  const ends = plan.y.length;
  if (plan.ent.length !== ends) {
    pool.give(plan.ent);
    plan.ent = pool.takeF64(ends);
  }
  const ent = plan.ent;
  const ispec = settings.ispec;
  const hasIc = ispec !== null;
  const ic = hasIc && out.ic ? out.ic : noIc(net);
  const st = new EvalStats();
  const gsN = Math.exp(plan.lnScale[1]);
  const gsP = Math.exp(plan.lnScale[0]);
  const junctions = junctionPossible(plan);
  const sup = plan.sup;
  if (sup.used && sup.changed.length === 1 && !junctions) {
    // A point superposed from one changed inject: every per-device quantity is part0 + v·part1 too.
    const parts = sup.parts ?? (sup.parts = superposedParts(plan, gsN, gsP));
    const v = injects.value[sup.changed[0]];
    st.maxCurrent = superposedLoop(m, parts, v, out.currents, out.saturated);
    const { e0, e1 } = parts;
    for (let e = 0; e < ends; e++) ent[e] = e0[e] + v * e1[e];
  } else {
    ent.fill(0);
    st.maxCurrent = currentLoop(
      m,
      plan.pack,
      plan.c,
      plan.y,
      plan.keyJunction,
      junctions,
      gsN,
      gsP,
      out.currents,
      out.saturated,
      ent,
      st,
    );
  }
  junctionWorst(plan, net, V, st);
  if (hasIc) icLoop(m, plan.pack, plan.c, plan.y, gsN, gsP, devices.w, devices.l, ispec as number, ic, st);
  // Injects: value amperes leave `from` and enter `to` (a rail's entry in its first polarity slot).
  const { prow } = plan;
  for (let j = 0; j < injects.count; j++) {
    const v = injects.value[j];
    const f = prow[injects.from[j]];
    const t = prow[injects.to[j]];
    ent[f >= 0 ? f : rows - 2 - 2 * f] -= v;
    ent[t >= 0 ? t : rows - 2 - 2 * t] += v;
  }
  // A rail delivers what leaves it into the network; internal nodes: the KCL residual.
  const railCurrents = out.railCurrents;
  railCurrents.fill(NaN);
  const railNodes = plan.railNodes;
  for (let q = 0; q < railNodes.length; q++)
    railCurrents[railNodes[q]] = 0 - (ent[rows + 2 * q] + ent[rows + 2 * q + 1]);
  let residual = 0;
  let worst = -1;
  for (let k = 0; k < rows; k++) {
    const e = Math.abs(ent[k]);
    // (A NaN is the worst there is: kept, for evaluationProblem to report.)
    if (!(e <= residual) || worst < 0) {
      residual = e;
      worst = k;
      if (Number.isNaN(e)) break;
    }
  }
  return {
    currents: out.currents,
    ic,
    saturated: out.saturated,
    railCurrents,
    residual,
    worstNode: worst < 0 ? -1 : plan.nodeAt[worst],
    maxCurrent: st.maxCurrent,
    warnings: validityWarnings(net, st),
  };
}

/**
 * Whether any device can have a source or drain beyond its bulk/well: some
 * end's û above the lowest threshold of any key (one pass over the rows and
 * rail slots; usually no, and then the per-device test is skipped).
 */
function junctionPossible(plan: LinearPlan): boolean {
  const { y, keyJunction, rows, railTouch } = plan;
  let lowest = Infinity;
  for (let k = 0; k < keyJunction.length; k++) if (keyJunction[k] < lowest) lowest = keyJunction[k];
  for (let e = 0; e < rows; e++) if (y[e] > lowest) return true;
  // A rail's slot for polarity p is some device's end only when a channel of that type touches the rail.
  for (let q = 0; q < railTouch.length; q++) {
    if (railTouch[q] & 1 && y[rows + 2 * q] > lowest) return true;
    if (railTouch[q] & 2 && y[rows + 2 * q + 1] > lowest) return true;
  }
  return false;
}

/**
 * Currents and saturation of every device; the current entering each end
 * (ent: rows, then two slots per rail): an nfet's current (drain → source) enters
 * its source, a pfet's (source → drain) leaves it; when `junctions`, devices
 * whose source or drain is beyond the bulk/well (counted into st: first and
 * count). Returns the largest |I|. One pass.
 */
function currentLoop(
  m: number,
  pack: Int32Array,
  c: Float64Array,
  y: Float64Array,
  keyJunction: Float64Array,
  junctions: boolean,
  gsN: number,
  gsP: number,
  currents: Float64Array,
  saturated: Uint8Array,
  ent: Float64Array,
  st: EvalStats,
): number {
  let most = 0;
  let first = -1;
  let count = 0;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    const kp = pack[q + 2];
    const isN = (kp & 1) === 0;
    const ua = y[a];
    const ub = y[b];
    const g = c[d] * (isN ? gsN : gsP);
    const i = g * ua - g * ub;
    currents[d] = i;
    const abs = i < 0 ? -i : i;
    if (abs > most) most = abs;
    saturated[d] = ub < E4 * ua ? 1 : 0;
    const into = isN ? i : -i;
    ent[a] += into;
    ent[b] -= into;
    if (junctions && (ua > ub ? ua : ub) > keyJunction[kp >> 1]) {
      if (first < 0) first = d;
      count++;
    }
  }
  st.junctionCount = count;
  st.junctionFirst = first;
  return most;
}

/**
 * The linear parts of a superposed point (see SuperposedParts in linear.ts):
 * currentLoop run once on `rest` (with the rails' û) and once on the changed
 * inject's z (rails at zero: they do not move with it), and the saturation
 * margins of both. Built on the first superposed point after a factorisation
 * and reused while only that inject's value changes; each later point then
 * costs two reads and a multiply-add per device and end instead of gathers
 * and scatters. (The KCL residual of such a point is likewise the residual
 * of rest plus v times that of z, the rounding of forming û itself left out:
 * one unit in the last place of each û.)
 */
function superposedParts(plan: LinearPlan, gsN: number, gsP: number): SuperposedParts {
  const { pack, c, rows, y, sup, keyJunction } = plan;
  const m = c.length;
  const ends = y.length;
  const u = pool.takeF64(ends);
  const flags = pool.takeU8(m);
  const stats = new EvalStats();
  const parts: SuperposedParts = {
    i0: pool.takeF64(m),
    i1: pool.takeF64(m),
    s0: pool.takeF64(m),
    s1: pool.takeF64(m),
    e0: pool.zerosF64(ends),
    e1: pool.zerosF64(ends),
  };
  u.set(sup.rest);
  u.set(y.subarray(rows), rows);
  currentLoop(m, pack, c, u, keyJunction, false, gsN, gsP, parts.i0, flags, parts.e0, stats);
  saturationMargins(m, pack, u, parts.s0);
  u.set(sup.z[0]);
  u.fill(0, rows);
  currentLoop(m, pack, c, u, keyJunction, false, gsN, gsP, parts.i1, flags, parts.e1, stats);
  saturationMargins(m, pack, u, parts.s1);
  pool.give(u, flags);
  return parts;
}

/** Per device: û_d − e⁻⁴·û_s from the pseudo-voltages u by end (negative: saturated, as in currentLoop). */
function saturationMargins(m: number, pack: Int32Array, u: Float64Array, margin: Float64Array): void {
  for (let d = 0, q = 0; d < m; d++, q += 3) margin[d] = u[pack[q + 1]] - E4 * u[pack[q]];
}

/** Currents and saturation of a superposed point (v amperes in the changed inject); returns the largest |I|. */
function superposedLoop(
  m: number,
  parts: SuperposedParts,
  v: number,
  currents: Float64Array,
  saturated: Uint8Array,
): number {
  const { i0, i1, s0, s1 } = parts;
  let most = 0;
  for (let d = 0; d < m; d++) {
    const i = i0[d] + v * i1[d];
    currents[d] = i;
    const abs = i < 0 ? -i : i;
    if (abs > most) most = abs;
    saturated[d] = s0[d] + v * s1[d] < 0 ? 1 : 0;
  }
  return most;
}

/**
 * The forward bias in volts (from V) of the devices currentLoop flagged as
 * beyond their bulk/well: the largest into st.
 */
function junctionWorst(plan: LinearPlan, net: Network, V: Float64Array, st: EvalStats): void {
  const first = st.junctionFirst;
  if (st.junctionCount === 0 || first < 0) return;
  const { pack, y, keyJunction, keyType, keyBulk } = plan;
  const { source, drain } = net.devices;
  const m = net.devices.count;
  let worst = 0;
  for (let d = first, q = 3 * first; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    const key = pack[q + 2] >> 1;
    const ua = y[a];
    const ub = y[b];
    if (!((ua > ub ? ua : ub) > keyJunction[key])) continue;
    const bk = keyBulk[key];
    const vb = bk >= 0 ? V[bk] : 0;
    const vs = V[source[d]];
    const vd = V[drain[d]];
    const fwd = keyType[key] === 0 ? vb - Math.min(vs, vd) : Math.max(vs, vd) - vb;
    if (fwd > worst) worst = fwd;
  }
  st.junctionWorst = worst;
}

/** Inversion coefficients I_F/(ispec·W/L) and the devices beyond weak inversion. */
function icLoop(
  m: number,
  pack: Int32Array,
  c: Float64Array,
  y: Float64Array,
  gsN: number,
  gsP: number,
  w: Float64Array,
  l: Float64Array,
  ispec: number,
  ic: Float64Array,
  st: EvalStats,
): void {
  let first = -1;
  let count = 0;
  let worst = 0;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const ua = y[pack[q]];
    const iF = c[d] * ((pack[q + 2] & 1) === 0 ? gsN : gsP) * ua;
    const v = iF / ((ispec * w[d]) / l[d]);
    ic[d] = v;
    if (v > WEAK_INVERSION_IC) {
      if (first < 0) first = d;
      count++;
      if (v > worst) worst = v;
    }
  }
  st.inversionCount = count;
  st.inversionFirst = first;
  st.inversionWorst = worst;
}

/**
 * Why an evaluated linear point must not be reported as solved, or null: a
 * current out of double precision's range (not finite), or a KCL error beyond
 * KCL_LIMIT of the largest current. The message says which of two causes it
 * is: when the sum of the magnitudes of the terms at the worst node (a
 * channel's forward and reverse currents g·û_s and g·û_d, each of which can be
 * far larger than their difference) times 64 units in the last place covers
 * the error, the conductances span more decades than double precision
 * resolves (e.g. a lateral gate far above the others); otherwise the solve
 * itself lost the accuracy.
 */
export function evaluationProblem(
  plan: LinearPlan,
  net: Network,
  ev: Evaluation,
): { node: number; message: string } | null {
  const { nodes } = net;
  const scale = currentScale(net, ev);
  let railBad = -1;
  for (const q of plan.railNodes) if (!Number.isFinite(ev.railCurrents[q])) railBad = q;
  if (!Number.isFinite(ev.residual) || !Number.isFinite(scale) || railBad >= 0) {
    const node = railBad >= 0 ? railBad : ev.worstNode;
    return {
      node,
      message: `the currents${node >= 0 ? ` at ${nodes.names[node]}` : ""} are beyond double precision's range: rails, gates or the temperature put exp(±V/ut) beyond about 1e±308 (a node or gate hundreds of ut from the others)`,
    };
  }
  if (ev.residual <= KCL_LIMIT * scale || ev.worstNode < 0) return null;
  const row = plan.prow[ev.worstNode];
  const { pack, c, y, lnScale } = plan;
  const gsN = Math.exp(lnScale[1]);
  const gsP = Math.exp(lnScale[0]);
  let terms = 0;
  for (let d = 0, q = 0; row >= 0 && d < c.length; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a === row || b === row) terms += c[d] * ((pack[q + 2] & 1) === 0 ? gsN : gsP) * (y[a] + y[b]);
  }
  const name = nodes.names[ev.worstNode];
  const what = `the KCL error at node ${name} is ${ev.residual.toExponential(2)} A, ${(ev.residual / scale).toExponential(1)} of the largest current`;
  return {
    node: ev.worstNode,
    message:
      ev.residual <= 64 * Number.EPSILON * terms
        ? `results not reliable: ${what}; the channels there carry forward currents of ${terms.toExponential(1)} A against ${scale.toExponential(1)} A, more decades than double precision resolves (e.g. a gate far above the others)`
        : `accuracy lost in the solve: ${what}`,
  };
}
