/**
 * Expectations at one solved point: for each `expect` of the network, whether it holds and its margin — how far
 * the point is from the bound, in the bound's unit, positive when it holds.
 *
 * Margins
 * - `a < b`, `a <= b`: b − a; `a > b`, `a >= b`: a − b; `a == b`: −|a − b|; `a != b`: |a − b|. A chained
 *   comparison takes the smallest over its adjacent pairs, `and` the smallest of its conditions, `or` the largest,
 *   `not` the negation. A margin of exactly 0 holds for `<=` and fails for `<`, as the comparison says.
 * - saturated: V_DS − 4·U_T over the devices it covers (pfet: V_SD), the smallest; unsaturated: 4·U_T − V_DS.
 *   The verdict is the point's saturation flags (what the Devices table shows), so the two always agree.
 * - weak: below − IC, the smallest (an unknown IC fails).
 * - reverse: the smallest reverse bias of a source or drain junction plus the 1 µV tolerance (a junction
 *   forward-biased by more than the tolerance fails).
 * - A condition whose comparisons mix units has no margin (NaN), only a verdict.
 */
import { type ConditionTree, type Expectation, type Network, NFET } from "../lang/network";
import { JUNCTION_TOLERANCE } from "../lang/vocabulary";

/** One point's verdicts and margins, one entry per expectation of the network, in statement order. */
export interface PointExpectations {
  /** 1 holds, 0 fails. */
  passed: Uint8Array;
  /** NaN where no margin exists (mixed units, a value that is not a number). */
  margins: Float64Array;
}

/** What an expectation reads at a solved point. */
export interface ExpectationInput {
  /** The network at the point (its settings and rail values). */
  net: Network;
  voltages: Float64Array;
  currents: Float64Array;
  /** Inversion coefficients (NaN where unknown). */
  ic: Float64Array;
  saturated: Uint8Array;
  railCurrents: Float64Array;
  params: Readonly<Record<string, number>>;
  probes: Readonly<Record<string, number>>;
}

/** A verdict and a margin. */
interface Outcome {
  passed: boolean;
  margin: number;
}

/** Every expectation of `at.net` at the point; null for a network without expectations. */
export function evaluateExpectations(at: ExpectationInput): PointExpectations | null {
  const xs = at.net.expectations;
  if (xs.length === 0) return null;
  const passed = new Uint8Array(xs.length);
  const margins = new Float64Array(xs.length);
  const ctx = {
    voltage: (node: number) => at.voltages[node],
    deviceCurrent: (device: number) => at.currents[device],
    injectCurrent: (inject: number) => at.net.injects.value[inject],
    railCurrent: (node: number) => at.railCurrents[node],
  };
  for (let i = 0; i < xs.length; i++) {
    const o = evaluateOne(xs[i], at, ctx);
    passed[i] = o.passed ? 1 : 0;
    margins[i] = o.margin;
  }
  return { passed, margins };
}

function evaluateOne(x: Expectation, at: ExpectationInput, ctx: Parameters<Expectation["operands"]>[0]): Outcome {
  if (x.check) {
    const devices = x.check.devices;
    switch (x.check.kind) {
      case "saturated":
        return saturation(at, devices, true);
      case "unsaturated":
        return saturation(at, devices, false);
      case "weak":
        return weak(at, devices, x.check.below);
      case "reverse":
        return junctions(at, devices);
    }
  }
  const values = new Float64Array(x.operandCount);
  x.operands(ctx, at.params, at.net.settings, at.probes, values);
  const o = condition(x.condition!, values);
  return x.mixedUnits ? { passed: o.passed, margin: NaN } : o;
}

/** The verdict and margin of a condition tree over its operand values. */
function condition(t: ConditionTree, v: Float64Array): Outcome {
  switch (t.k) {
    case "compare": {
      let passed = true;
      let margin = Infinity;
      for (let i = 0; i < t.ops.length; i++) {
        const a = v[t.first + i];
        const b = v[t.first + i + 1];
        let ok: boolean;
        let m: number;
        switch (t.ops[i]) {
          case "<":
            ok = a < b;
            m = b - a;
            break;
          case "<=":
            ok = a <= b;
            m = b - a;
            break;
          case ">":
            ok = a > b;
            m = a - b;
            break;
          case ">=":
            ok = a >= b;
            m = a - b;
            break;
          case "==":
            ok = a === b;
            m = -Math.abs(a - b);
            break;
          case "!=":
            ok = a !== b && !Number.isNaN(a) && !Number.isNaN(b);
            m = Math.abs(a - b);
            break;
        }
        passed &&= ok;
        margin = Math.min(margin, m);
      }
      return { passed, margin };
    }
    case "and":
    case "or": {
      const and = t.k === "and";
      let passed = and;
      let margin = and ? Infinity : -Infinity;
      for (const a of t.args) {
        const o = condition(a, v);
        passed = and ? passed && o.passed : passed || o.passed;
        margin = and ? Math.min(margin, o.margin) : Math.max(margin, o.margin);
      }
      return { passed, margin };
    }
    case "not": {
      const o = condition(t.arg, v);
      return { passed: !o.passed, margin: -o.margin };
    }
  }
}

/** Each covered device: `f(d)` for the listed devices, or every device when `devices` is null. */
function forDevices(net: Network, devices: Int32Array | null, f: (d: number) => void): void {
  if (devices) for (let i = 0; i < devices.length; i++) f(devices[i]);
  else for (let d = 0; d < net.devices.count; d++) f(d);
}

/** saturated (want = true) or unsaturated by design (want = false). */
function saturation(at: ExpectationInput, devices: Int32Array | null, want: boolean): Outcome {
  const { type, source, drain } = at.net.devices;
  const V = at.voltages;
  const limit = 4 * at.net.settings.ut;
  let passed = true;
  let margin = Infinity;
  forDevices(at.net, devices, (d) => {
    const vds = (type[d] === NFET ? 1 : -1) * (V[drain[d]] - V[source[d]]);
    const m = want ? vds - limit : limit - vds;
    if ((at.saturated[d] === 1) !== want) passed = false;
    if (m < margin || Number.isNaN(m)) margin = m;
  });
  return { passed, margin };
}

/** weak: every covered device's inversion coefficient below `below`. */
function weak(at: ExpectationInput, devices: Int32Array | null, below: number): Outcome {
  let passed = true;
  let margin = Infinity;
  forDevices(at.net, devices, (d) => {
    const ic = at.ic[d];
    if (!(ic < below)) passed = false;
    const m = below - ic;
    if (m < margin || Number.isNaN(m)) margin = m;
  });
  return { passed, margin };
}

/** reverse: no covered device's source or drain beyond its bulk (pfet: well) by more than the tolerance. */
function junctions(at: ExpectationInput, devices: Int32Array | null): Outcome {
  const { type, source, drain, bulk } = at.net.devices;
  const V = at.voltages;
  let passed = true;
  let margin = Infinity;
  forDevices(at.net, devices, (d) => {
    const sg = type[d] === NFET ? 1 : -1;
    const b = bulk[d];
    const vb = b >= 0 ? V[b] : 0;
    const reverse = Math.min(sg * (V[source[d]] - vb), sg * (V[drain[d]] - vb));
    const m = reverse + JUNCTION_TOLERANCE;
    if (!(m >= 0)) passed = false;
    if (m < margin || Number.isNaN(m)) margin = m;
  });
  return { passed, margin };
}
