/**
 * A point's evaluation in voltage form: from node voltages V and the device
 * constants P, with the device equations (device.ts), every device's current,
 * saturation, inversion coefficient and junction check, every rail's current,
 * the KCL residual and the probes. The Newton path evaluates here; the linear
 * path evaluates from its pseudo-voltages (linear-eval.ts) into the same
 * Evaluation, and tests check one against the other.
 */

import { type Network, NFET } from "../lang/network";
import { JUNCTION_TOLERANCE, WEAK_INVERSION_IC } from "../lang/vocabulary";
import { type DeviceParams, deviceCurrent } from "./device";
import type { Evaluation, PointStorage, SolverWarning } from "./results";

/**
 * A point's KCL error, relative to its largest device or inject current
 * (`currentScale`), beyond which a linear point is not reported as solved and
 * a Newton point carries an accuracy warning. A sound solve leaves about
 * 1e-15; the output currents' own error was measured at a few times the
 * relative KCL error (a 64-tap row whose lateral gate is on the supply: 1.2e-3
 * of KCL error, outputs 0.7% off), so this keeps reported currents to about 1e-5.
 */
export const KCL_LIMIT = 1e-6;

/** What the evaluation loops find besides the arrays: the largest current and the devices the validity checks flag. */
export class EvalStats {
  maxCurrent = 0;
  junctionCount = 0;
  junctionFirst = -1;
  /** Largest forward bias, volts. */
  junctionWorst = 0;
  inversionCount = 0;
  inversionFirst = -1;
  inversionWorst = 0;
}

/** The largest device current or inject of an evaluated point: what its KCL error is measured against. */
export function currentScale(net: Network, ev: Evaluation): number {
  let scale = ev.maxCurrent;
  for (let j = 0; j < net.injects.count; j++) scale = Math.max(scale, Math.abs(net.injects.value[j]));
  return scale;
}

/**
 * Everything reported for one point, from node voltages V (every node) and
 * the device constants P. `kcl` (length = nodes) is scratch; `into` receives
 * the arrays (fresh ones without it).
 */
export function evaluate(
  net: Network,
  V: Float64Array,
  P: DeviceParams,
  kcl?: Float64Array,
  into?: PointStorage,
): Evaluation {
  const { devices, injects, nodes, settings } = net;
  const m = devices.count;
  const nn = nodes.names.length;
  const hasIc = settings.ispec !== null && (settings.model === "weak" || settings.vt0 !== null);
  const out: PointStorage = into ?? {
    currents: new Float64Array(m),
    ic: null,
    saturated: new Uint8Array(m),
    railCurrents: new Float64Array(nn),
  };
  // Without ispec every ic is null: one shared all-NaN array per network (results are read-only).
  const ic = hasIc ? (out.ic ?? new Float64Array(m)) : noIc(net);
  const entering = kcl ?? new Float64Array(nn);
  entering.fill(0);
  const st = new EvalStats();
  deviceLoop(net, V, P, hasIc, out, ic, entering, st);
  const { value: injValue, from: injFrom, to: injTo } = injects;
  for (let j = 0; j < injects.count; j++) {
    const v = injValue[j];
    entering[injFrom[j]] -= v;
    entering[injTo[j]] += v;
  }
  const { residual, worstNode } = railLoop(nodes.railValue, entering, out.railCurrents);
  return {
    currents: out.currents,
    ic,
    saturated: out.saturated,
    railCurrents: out.railCurrents,
    residual,
    worstNode,
    maxCurrent: st.maxCurrent,
    warnings: validityWarnings(net, st),
  };
}

/**
 * Per device: current, KCL contributions (entering, accumulated), saturation
 * (V_DS > 4·U_T), ic (when hasIc) and the validity counts into st. A
 * function of its own so that the loop is optimised as a whole, not by
 * on-stack replacement inside evaluate (whose code after the loop has no
 * type feedback yet and threw the optimised code away on every call).
 */
function deviceLoop(
  net: Network,
  V: Float64Array,
  P: DeviceParams,
  hasIc: boolean,
  out: PointStorage,
  ic: Float64Array,
  entering: Float64Array,
  st: EvalStats,
): void {
  const { count: m, type, gate, source, drain, bulk, w, l } = net.devices;
  const { currents, saturated } = out;
  const icScale = hasIc ? (net.settings.ispec as number) : 0;
  const checkWeak = hasIc && net.settings.model === "weak";
  const satLimit = 4 * net.settings.ut;
  const four = new Float64Array(4);
  for (let d = 0; d < m; d++) {
    const sg = type[d] === NFET ? 1 : -1;
    const b = bulk[d];
    const s = source[d];
    const t = drain[d];
    const vb = b >= 0 ? V[b] : 0;
    const xs = sg * (V[s] - vb);
    const xd = sg * (V[t] - vb);
    const iF = deviceCurrent(P, d, sg * (V[gate[d]] - vb), xs, xd, four);
    const i = four[0];
    currents[d] = i;
    const a = Math.abs(i);
    if (a > st.maxCurrent) st.maxCurrent = a;
    entering[s] += sg * i;
    entering[t] -= sg * i;
    saturated[d] = xd - xs > satLimit ? 1 : 0;
    if (hasIc) {
      const icd = iF / ((icScale * w[d]) / l[d]);
      ic[d] = icd;
      if (checkWeak && icd > WEAK_INVERSION_IC) {
        if (st.inversionFirst < 0) st.inversionFirst = d;
        st.inversionCount++;
        if (icd > st.inversionWorst) st.inversionWorst = icd;
      }
    }
    const fwd = -Math.min(xs, xd);
    if (fwd > JUNCTION_TOLERANCE) {
      if (st.junctionFirst < 0) st.junctionFirst = d;
      st.junctionCount++;
      if (fwd > st.junctionWorst) st.junctionWorst = fwd;
    }
  }
}

/** Rail currents (NaN at internal nodes); the largest KCL error over internal nodes and where. */
function railLoop(
  rv: Float64Array,
  entering: Float64Array,
  railCurrents: Float64Array,
): { residual: number; worstNode: number } {
  let residual = 0;
  let worstNode = -1;
  for (let k = 0; k < rv.length; k++) {
    if (Number.isFinite(rv[k])) {
      railCurrents[k] = 0 - entering[k]; // not -0 for an idle rail
    } else {
      railCurrents[k] = NaN;
      const e = Math.abs(entering[k]);
      if (e > residual || worstNode < 0) {
        residual = e;
        worstNode = k;
      }
    }
  }
  return { residual, worstNode };
}

/** The junction and inversion warnings of a point from its stats. */
export function validityWarnings(net: Network, st: EvalStats): SolverWarning[] {
  const warnings: SolverWarning[] = [];
  const { type, names } = net.devices;
  if (st.junctionCount > 0) {
    const first = st.junctionFirst;
    const where = type[first] === 0 ? "bulk" : "well";
    warnings.push(
      deviceWarning(
        "junction",
        names,
        first,
        st.junctionCount,
        st.junctionWorst,
        `source or drain beyond the ${where} (junction forward-biased by up to ${formatVolts(st.junctionWorst)}); the model has no junction current`,
      ),
    );
  }
  if (st.inversionCount > 0) {
    const worst = st.inversionWorst;
    warnings.push(
      deviceWarning(
        "inversion",
        names,
        st.inversionFirst,
        st.inversionCount,
        worst,
        `inversion coefficient up to ${worst.toPrecision(3)} (> ${WEAK_INVERSION_IC}), outside weak inversion; the exponential model overestimates the current there (set model = ekv)`,
      ),
    );
  }
  return warnings;
}

const noIcCache = new WeakMap<object, Float64Array>();

/** The all-NaN inversion-coefficient array of a network's device table. */
export function noIc(net: Network): Float64Array {
  let a = noIcCache.get(net.devices.type);
  if (!a || a.length !== net.devices.count) {
    a = new Float64Array(net.devices.count).fill(NaN);
    noIcCache.set(net.devices.type, a);
  }
  return a;
}

function formatVolts(v: number): string {
  return v >= 0.1 ? `${v.toFixed(3)} V` : `${(v * 1000).toPrecision(3)} mV`;
}

/** Probe values of a solved point (NaN for a probe whose evaluation throws or is not finite). */
export function evaluateProbes(
  net: Network,
  V: Float64Array,
  currents: Float64Array,
  railCurrents: Float64Array,
  params: Record<string, number>,
): Record<string, number> {
  const out: Record<string, number> = {};
  if (net.probes.length === 0) return out;
  const ctx = {
    voltage: (node: number) => V[node],
    deviceCurrent: (device: number) => currents[device],
    injectCurrent: (inject: number) => net.injects.value[inject],
    railCurrent: (node: number) => railCurrents[node],
  };
  for (const p of net.probes) {
    let v: number;
    try {
      v = p.evaluate(ctx, params, net.settings);
    } catch {
      v = NaN;
    }
    out[p.name] = Number.isFinite(v) ? v : NaN;
  }
  return out;
}

/** The first device with a pin (source, drain or gate) on `node`, or -1. */
export function firstDeviceAt(net: Network, node: number): number {
  const { source, drain, gate, count } = net.devices;
  for (let d = 0; d < count; d++) if (source[d] === node || drain[d] === node || gate[d] === node) return d;
  return -1;
}

/** A warning about `count` devices, named by the first: "m3 and 4 other devices: <detail>". */
function deviceWarning(
  kind: SolverWarning["kind"],
  names: readonly string[],
  first: number,
  count: number,
  worst: number,
  detail: string,
): SolverWarning {
  const others = count > 1 ? ` and ${count - 1} other device${count > 2 ? "s" : ""}` : "";
  return { kind, device: first, count, worst, message: `${names[first]}${others}: ${detail}` };
}
