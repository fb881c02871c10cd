/**
 * Results of a solve: per-point typed arrays, their evaluation from node
 * voltages with the device equations (never from the linear system), and the
 * LANGUAGE.md `solve --json` document.
 *
 * Sign conventions (LANGUAGE.md): device current nfet drain→source, pfet
 * source→drain; a rail's current is what it delivers into the network; the
 * residual is the largest KCL error over internal nodes, in amperes.
 */

import { type Diagnostic, type Network, NFET } from "../lang/network";
import { LineIndex } from "../lang/diagnostics";
import type { Classification } from "./classify";
import { type DeviceParams, deviceCurrent } from "./device";

/** NFET as a module-local constant (an imported binding can compile to a getter call per read; see linear.ts). */
const N_TYPE: number = NFET;

export type Method = "linear" | "newton";

export interface SolverInfo {
  method: Method;
  iterations: number;
  /** Largest KCL error over internal nodes, amperes, from the device equations in voltage form. */
  residual: number;
  /** Why this method: the classification reason. */
  reason: string;
  /** Fill-reducing ordering of the linear system (linear method), or of the Jacobian (Newton). */
  ordering?: string;
  /** Newton only: whether source-stepping continuation was needed. */
  continuation?: boolean;
  /** Linear only: whether this point reused the previous numeric factorisation. */
  reusedFactor?: boolean;
}

/**
 * A point's KCL error, relative to its largest device or inject current
 * (`currentScale`), beyond which a linear point is not reported as solved and
 * a Newton point carries an accuracy warning. A sound solve leaves about
 * 1e-15; the output currents' own error was measured at a few times the
 * relative KCL error (a 64-tap row whose lateral gate is on the supply: 1.2e-3
 * of KCL error, outputs 0.7% off), so this keeps reported currents to about 1e-5.
 */
export const KCL_LIMIT = 1e-6;

/** The largest device current or inject of an evaluated point: what its KCL error is measured against. */
export function currentScale(net: Network, ev: Evaluation): number {
  let scale = ev.maxCurrent;
  for (let j = 0; j < net.injects.count; j++) scale = Math.max(scale, Math.abs(net.injects.value[j]));
  return scale;
}

export type WarningKind = "junction" | "inversion" | "accuracy";

/** A validity warning, aggregated over devices of one point. */
export interface SolverWarning {
  kind: WarningKind;
  /** First device concerned. */
  device: number;
  /** How many devices. */
  count: number;
  /** Largest forward bias (junction, volts), inversion coefficient (inversion) or KCL error relative to the largest current (accuracy). */
  worst: number;
  message: string;
}

export interface PointResult {
  /** Position in the run: grid point (outer sweep slowest) × sample. */
  index: number;
  /** Param values of this point (all params), plus temp when it is swept. */
  params: Record<string, number>;
  /** Mismatch sample 0..N-1, or null without mismatch. */
  sample: number | null;
  ok: boolean;
  /** When !ok: what failed, naming the node. */
  error: string | null;
  /** Node voltages (volts, every node; rails at their values). */
  voltages: Float64Array;
  /** Device currents (sign convention above). */
  currents: Float64Array;
  /** Inversion coefficient I_F/(ispec·W/L); NaN when not available (reported as null). */
  ic: Float64Array;
  /** 1 when V_DS > 4·U_T (pfet: V_SD). */
  saturated: Uint8Array;
  /** Per node: current a rail delivers into the network; NaN for internal nodes. */
  railCurrents: Float64Array;
  probes: Record<string, number>;
  solver: SolverInfo;
  warnings: SolverWarning[];
}

export interface ProbeSummary {
  probe: string;
  /** Index of the grid point (outer sweep slowest), and its params. */
  gridPoint: number;
  params: Record<string, number>;
  samples: number;
  mean: number;
  std: number;
  min: number;
  max: number;
  /** Percentiles (linear interpolation between order statistics). */
  p1: number;
  p5: number;
  p50: number;
  p95: number;
  p99: number;
}

/** Milliseconds per phase, summed over the run's points. */
export interface RunTimings {
  /** Structure: graph, ordering, symbolic analysis (linear) or Jacobian pattern and ordering (Newton). */
  analyseMs: number;
  /** Linear: conductances and numeric factorisation (zero for a point that reuses it). Newton: the start. */
  factorMs: number;
  /** Linear: right-hand side and triangular solves (or superposition), up to the pseudo-voltages. Newton: the iterations. */
  solveMs: number;
  /** Linear: node voltages from the pseudo-voltages (a logarithm per node). Both: currents, inversion coefficients, rail currents, KCL residual, probes. */
  evaluateMs: number;
}

export interface RunResult {
  ok: boolean;
  /** Points in run order (only the retained ones when `keepPoints` is false). */
  points: PointResult[];
  /** Points solved (including failed ones). */
  solved: number;
  /** Points the run would have: grid points × samples (before maxPoints). */
  total: number;
  classification: Classification;
  method: Method;
  reason: string;
  /** One entry per failed point (or a structural problem, point -1). */
  failures: { point: number; node: number; message: string }[];
  /** Per probe and grid point, over mismatch samples (empty without mismatch). */
  summaries: ProbeSummary[];
  stopped: boolean;
  timings: RunTimings;
}

/** Tolerance below which a junction counts as forward-biased, volts. */
export const JUNCTION_TOLERANCE = 1e-6;
/** Inversion coefficient above which the weak-inversion model no longer holds. */
export const WEAK_LIMIT = 0.1;

export interface Evaluation {
  currents: Float64Array;
  ic: Float64Array;
  saturated: Uint8Array;
  railCurrents: Float64Array;
  residual: number;
  /** Node with the largest KCL error (-1 if none). */
  worstNode: number;
  /** Largest |device current|. */
  maxCurrent: number;
  warnings: SolverWarning[];
}

/**
 * Storage for one point's result arrays: views into a slab shared by several
 * retained points, fresh arrays, or one set reused point after point when the
 * run streams its points (see sweep.ts). ic is null when the evaluation
 * needs none (no ispec).
 */
export interface PointStorage {
  currents: Float64Array;
  ic: Float64Array | null;
  saturated: Uint8Array;
  railCurrents: Float64Array;
}

/**
 * Everything reported for one point, from node voltages V (every node) and
 * the device constants P, with the device equations in voltage form (the
 * Newton path's evaluation; the linear path evaluates from its pseudo-voltages
 * in linear-eval.ts). `kcl` (length = nodes) is scratch.
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
  const { type, gate, source, drain, bulk, w, l } = devices;
  const ispec = settings.ispec;
  const hasIc = ispec !== null && (settings.model === "weak" || settings.vt0 !== null);
  const currents = into ? into.currents : new Float64Array(m);
  // Without ispec every ic is null: one shared all-NaN array per network (results are read-only).
  const ic = hasIc ? (into?.ic ?? new Float64Array(m)) : noIc(net);
  const saturated = into ? into.saturated : new Uint8Array(m);
  const entering = kcl ?? new Float64Array(nn);
  entering.fill(0);
  const checkWeak = hasIc && settings.model === "weak";
  const st = evalStats;
  deviceLoop(
    m,
    type,
    gate,
    source,
    drain,
    bulk,
    w,
    l,
    V,
    P,
    hasIc,
    hasIc ? (ispec as number) : 0,
    checkWeak,
    4 * settings.ut,
    currents,
    ic,
    saturated,
    entering,
    st,
  );
  const { value: injValue, from: injFrom, to: injTo } = injects;
  for (let j = 0; j < injects.count; j++) {
    const v = injValue[j];
    entering[injFrom[j]] -= v;
    entering[injTo[j]] += v;
  }
  const railCurrents = into ? into.railCurrents : new Float64Array(nn);
  railLoop(nn, nodes.railValue, entering, railCurrents, st);
  return {
    currents,
    ic,
    saturated,
    railCurrents,
    residual: st[S_RESIDUAL],
    worstNode: st[S_WORST],
    maxCurrent: st[S_MAX],
    warnings: validityWarnings(net, st),
  };
}

/** The junction and inversion warnings of a point from the counts in st (slots below). */
export function validityWarnings(net: Network, st: Float64Array): SolverWarning[] {
  const warnings: SolverWarning[] = [];
  const { type, names } = net.devices;
  if (st[S_JCOUNT] > 0) {
    const first = st[S_JFIRST];
    const where = type[first] === 0 ? "bulk" : "well";
    warnings.push(
      deviceWarning(
        "junction",
        names,
        first,
        st[S_JCOUNT],
        st[S_JWORST],
        `source or drain beyond the ${where} (junction forward-biased by up to ${formatVolts(st[S_JWORST])}); the model has no junction current`,
      ),
    );
  }
  if (st[S_ICOUNT] > 0) {
    const worst = st[S_IWORST];
    warnings.push(
      deviceWarning(
        "inversion",
        names,
        st[S_IFIRST],
        st[S_ICOUNT],
        worst,
        `inversion coefficient up to ${worst.toPrecision(3)} (> ${WEAK_LIMIT}), outside weak inversion; the exponential model overestimates the current there (set model = ekv)`,
      ),
    );
  }
  return warnings;
}

/** Slots of evalStats, the scratch the evaluation loops report into (one evaluation at a time: the core is synchronous). */
export const S_MAX = 0;
export const S_JCOUNT = 1;
export const S_JFIRST = 2;
export const S_JWORST = 3;
export const S_ICOUNT = 4;
export const S_IFIRST = 5;
export const S_IWORST = 6;
export const S_RESIDUAL = 7;
export const S_WORST = 8;
export const evalStats = new Float64Array(9);

/**
 * Per device: current, KCL contributions (entering, accumulated), saturation,
 * ic (only when hasIc; icScale = ispec), validity counts into st. A function
 * of its own so that the loop is optimised as a whole, not by on-stack
 * replacement inside evaluate (whose code after the loop has no type feedback
 * yet and threw the optimised code away on every call). σ inline: no
 * imported-function call per device.
 */
function deviceLoop(
  m: number,
  type: Uint8Array,
  gate: Int32Array,
  source: Int32Array,
  drain: Int32Array,
  bulk: Int32Array,
  w: Float64Array,
  l: Float64Array,
  V: Float64Array,
  P: DeviceParams,
  hasIc: boolean,
  icScale: number,
  checkWeak: boolean,
  satLimit: number,
  currents: Float64Array,
  ic: Float64Array,
  saturated: Uint8Array,
  entering: Float64Array,
  st: Float64Array,
): void {
  let maxCurrent = 0;
  let junctionCount = 0;
  let junctionFirst = -1;
  let junctionWorst = 0;
  let invCount = 0;
  let invFirst = -1;
  let invWorst = 0;
  const out = new Float64Array(4);
  for (let d = 0; d < m; d++) {
    const sg = type[d] === N_TYPE ? 1 : -1;
    const b = bulk[d];
    const s = source[d];
    const t = drain[d];
    const vb = b >= 0 ? V[b] : 0;
    const xs = sg * (V[s] - vb);
    const xd = sg * (V[t] - vb);
    const iF = deviceCurrent(P, d, sg * (V[gate[d]] - vb), xs, xd, out);
    const i = out[0];
    currents[d] = i;
    const a = Math.abs(i);
    if (a > maxCurrent) maxCurrent = a;
    entering[s] += sg * i;
    entering[t] -= sg * i;
    saturated[d] = xd - xs > satLimit ? 1 : 0;
    if (hasIc) {
      const icd = iF / ((icScale * w[d]) / l[d]);
      ic[d] = icd;
      if (checkWeak && icd > WEAK_LIMIT) {
        if (invFirst < 0) invFirst = d;
        invCount++;
        if (icd > invWorst) invWorst = icd;
      }
    }
    const fwd = -Math.min(xs, xd);
    if (fwd > JUNCTION_TOLERANCE) {
      if (junctionFirst < 0) junctionFirst = d;
      junctionCount++;
      if (fwd > junctionWorst) junctionWorst = fwd;
    }
  }
  st[S_MAX] = maxCurrent;
  st[S_JCOUNT] = junctionCount;
  st[S_JFIRST] = junctionFirst;
  st[S_JWORST] = junctionWorst;
  st[S_ICOUNT] = invCount;
  st[S_IFIRST] = invFirst;
  st[S_IWORST] = invWorst;
}

/** Rail currents (NaN at internal nodes) and the largest KCL error over internal nodes into st (residual, worst node). */
function railLoop(
  nn: number,
  rv: Float64Array,
  entering: Float64Array,
  railCurrents: Float64Array,
  st: Float64Array,
): void {
  let residual = 0;
  let worstNode = -1;
  for (let k = 0; k < nn; k++) {
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
  st[S_RESIDUAL] = residual;
  st[S_WORST] = worstNode;
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

// ---------------------------------------------------------------------------
// The `solve --json` document (LANGUAGE.md).

export interface JsonDiagnostic {
  severity: "error" | "warning";
  line: number;
  column: number;
  message: string;
}

export interface JsonPoint {
  params: Record<string, number>;
  nodes: Record<string, number>;
  rails: Record<string, number>;
  devices: Record<string, { current: number; ic: number | null; saturated: boolean }>;
  probes: Record<string, number | null>;
  solver: { method: Method; iterations: number; residual: number; reason: string };
  sample: number;
}

export interface SolveJson {
  network: string | null;
  ok: boolean;
  diagnostics: JsonDiagnostic[];
  points: JsonPoint[];
}

const finiteOrNull = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** One point as LANGUAGE.md specifies (names as keys, null for missing numbers). */
export function pointJson(net: Network, p: PointResult): JsonPoint {
  const nodes: Record<string, number> = {};
  const names = net.nodes.names;
  for (let k = 0; k < names.length; k++) nodes[names[k]] = p.voltages[k];
  const rails: Record<string, number> = {};
  for (const r of net.rails) rails[r.name] = p.railCurrents[r.node];
  const devices: JsonPoint["devices"] = {};
  const dn = net.devices.names;
  for (let d = 0; d < dn.length; d++)
    devices[dn[d]] = { current: p.currents[d], ic: finiteOrNull(p.ic[d]), saturated: p.saturated[d] === 1 };
  const probes: Record<string, number | null> = {};
  for (const [k, v] of Object.entries(p.probes)) probes[k] = finiteOrNull(v);
  const { method, iterations, residual, reason } = p.solver;
  return {
    params: p.params,
    nodes,
    rails,
    devices,
    probes,
    solver: { method, iterations, residual, reason },
    sample: p.sample ?? 0,
  };
}

/**
 * The `runnel solve --json` document. `diagnostics` are the elaboration's;
 * solver failures become errors and validity warnings become warnings, placed
 * at the device's statement when `text` is given. `ok` is false, with no
 * points, when any diagnostic is an error or any point failed.
 */
export function toSolveJson(
  net: Network | null,
  diagnostics: Diagnostic[],
  run: RunResult | null,
  text?: string,
  name?: string | null,
  withPoints = true,
): SolveJson {
  const out: JsonDiagnostic[] = diagnostics.map((d) => ({
    severity: d.severity,
    line: d.line,
    column: d.column,
    message: d.message,
  }));
  const lines = text !== undefined ? new LineIndex(text) : null;
  const at = (offset: number): { line: number; column: number } =>
    lines && offset >= 0 ? lines.position(offset) : { line: 1, column: 1 };
  let ok = !diagnostics.some((d) => d.severity === "error") && net !== null && run !== null;
  if (net && run) {
    const seen = new Set<string>();
    for (const f of run.failures) {
      const dev = f.node >= 0 ? firstDeviceAt(net, f.node) : -1;
      out.push({ severity: "error", ...at(dev >= 0 ? net.devices.at[dev] : -1), message: f.message });
    }
    for (const p of run.points) {
      for (const w of p.warnings) {
        const key = `${w.kind}:${w.device}`;
        if (seen.has(key)) continue;
        seen.add(key);
        const where =
          run.points.length > 1 ? ` (first at point ${p.index}${p.sample !== null ? `, sample ${p.sample}` : ""})` : "";
        out.push({ severity: "warning", ...at(net.devices.at[w.device]), message: w.message + where });
      }
    }
    // A probe that is not a number (0/0, log of 0, a ratio over a current of 0 A) prints null: say so, once per probe.
    for (const probe of net.probes) {
      const p = run.points.find((q) => q.ok && probe.name in q.probes && !Number.isFinite(q.probes[probe.name]));
      if (!p) continue;
      const where =
        run.points.length > 1 ? ` (first at point ${p.index}${p.sample !== null ? `, sample ${p.sample}` : ""})` : "";
      out.push({
        severity: "warning",
        ...at(probe.span.from),
        message: `probe ${probe.name} is not a finite number (a division by zero, or a logarithm or root out of its domain): printed as null${where}`,
      });
    }
    if (!run.ok) ok = false;
  }
  return {
    network: net ? net.name : (name ?? null),
    ok,
    diagnostics: out,
    // (Without points, a caller prints them one by one with pointJson: a big run's text would not fit one string.)
    points: ok && net && run && withPoints ? run.points.map((p) => pointJson(net, p)) : [],
  };
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
