/**
 * The elaborated network: the one data structure between the language, the
 * solver, the editor and the server. Everything reads it; nothing re-parses text.
 *
 * Invariants
 * - Node indices are 0..nodes.names.length-1. Rails are nodes whose
 *   `railValue` is finite; internal nodes have `railValue` NaN.
 * - A device's `bulk` is a node index, or SUBSTRATE (-1) for the implicit
 *   substrate at 0 V. For a pfet `bulk` holds its `well` node.
 * - Device tables are struct-of-arrays (typed arrays), so networks of 10^6
 *   devices cost no object per device.
 * - Every numeric value is already evaluated for the default point (no sweep
 *   applied). Values that depend on a param or on `temp` are listed in
 *   `bindings`, so `applyPoint` re-evaluates only those for a sweep point.
 * - Spans are character offsets [from, to) into the source text.
 */

export type Severity = "error" | "warning";

export interface Span {
  from: number;
  to: number;
}

export interface Diagnostic {
  severity: Severity;
  /** 1-based line of `from`. */
  line: number;
  /** 1-based column of `from` (in UTF-16 code units, as editors count). */
  column: number;
  from: number;
  to: number;
  message: string;
  hint?: string;
}

export type Model = "weak" | "ekv";

export interface Settings {
  /** Subthreshold slope factor κ = 1/n. */
  kappa: number;
  /** Temperature in kelvin. */
  temp: number;
  /** Thermal voltage k·temp/q in volts (SI 2019 exact constants). */
  ut: number;
  /** Pre-exponential current of a W/L = 1 device, amperes. */
  i0: number;
  /** Threshold voltage for the all-region model, volts; null when not set. */
  vt0: number | null;
  /** Specific current of a W/L = 1 device, amperes; null when not set. */
  ispec: number | null;
  model: Model;
}

export interface ParamDef {
  name: string;
  /** Value at the default point. */
  value: number;
  /** Unit symbol of its value (units.ts `unitSymbol`: "V", "A", "" for a ratio); null or absent when not known. */
  unit?: string | null;
  span: Span;
  /**
   * Names this param's expression depends on, transitively (params, "temp",
   * "ut", "kappa"); absent or empty for a constant param.
   */
  dependsOn?: string[];
  /**
   * Re-evaluates the param's expression for a point; `scope` must already hold
   * the values of every earlier param and of temp, ut, kappa. Absent for a constant param.
   */
  evaluate?(scope: Readonly<Record<string, number>>): number;
}

export interface NodeTable {
  names: string[];
  index: Map<string, number>;
  /** Fixed voltage of a rail, NaN for an internal node. */
  railValue: Float64Array;
}

export const SUBSTRATE = -1;
export const NFET = 0;
export const PFET = 1;
export type FetType = typeof NFET | typeof PFET;

export interface DeviceTable {
  count: number;
  names: string[];
  index: Map<string, number>;
  /** NFET (0) or PFET (1). */
  type: Uint8Array;
  gate: Int32Array;
  source: Int32Array;
  drain: Int32Array;
  /** Bulk node for an nfet (SUBSTRATE when absent), well node for a pfet. */
  bulk: Int32Array;
  /** Width and length in metres. */
  w: Float64Array;
  l: Float64Array;
  /** Offset of the statement that made the device (for diagnostics). */
  at: Int32Array;
}

export interface InjectTable {
  count: number;
  names: string[];
  index: Map<string, number>;
  /** `value` amperes leave node `from` and enter node `to`. */
  from: Int32Array;
  to: Int32Array;
  value: Float64Array;
  at: Int32Array;
}

export interface RailDef {
  name: string;
  node: number;
  span: Span;
}

/** What a probe expression may read from a solved point. */
export interface ProbeContext {
  /** Absolute node voltage, volts. */
  voltage(node: number): number;
  /** current(device) with the sign conventions of docs/language.md (Sign conventions). */
  deviceCurrent(device: number): number;
  injectCurrent(inject: number): number;
  /** Current a rail delivers into the network. */
  railCurrent(node: number): number;
}

export interface Probe {
  name: string;
  span: Span;
  /** Unit symbol of its values (units.ts `unitSymbol`); null or absent when not known. */
  unit?: string | null;
  /** Evaluates the probe for one solved point; `params` holds that point's param values. */
  evaluate(ctx: ProbeContext, params: Readonly<Record<string, number>>, settings: Settings): number;
}

export interface Sweep {
  /** A param name, or "temp". */
  param: string;
  values: number[];
  log: boolean;
  span: Span;
}

export interface Mismatch {
  runs: number;
  seed: number;
  /** Pelgrom coefficient A_VT in V·µm: σ(ΔVT) = avt / sqrt(W·L) with W, L in µm. */
  avt: number;
  span: Span;
}

export type CompareOp = "<" | "<=" | ">" | ">=" | "==" | "!=";

/**
 * The logic of an expectation's condition. A comparison (chained: `a <= b < c`) compares the operand values
 * `first`, `first + 1`, … `first + ops.length` of its expectation, adjacent pairs with `ops`.
 */
export type ConditionTree =
  | { k: "compare"; first: number; ops: CompareOp[] }
  | { k: "and" | "or"; args: ConditionTree[] }
  | { k: "not"; arg: ConditionTree };

/** The device-set checks: saturated, unsaturated (by design), weak inversion, no forward-biased junction. */
export type CheckKind = "saturated" | "unsaturated" | "weak" | "reverse";

export interface DeviceCheck {
  kind: CheckKind;
  /** The name pattern as written (`*` matches any run of characters). */
  pattern: string;
  /** The devices it covers, ascending; null for every device. */
  devices: Int32Array | null;
  /** weak: the inversion coefficient every device must stay below. */
  below: number;
}

/**
 * An `expect` statement: a condition, or a device-set check, that must hold at every point and every mismatch
 * sample. Its margin at a point is how far the point is from the bound, in the bound's unit (positive: holds).
 */
export interface Expectation {
  name: string;
  /** The whole statement. */
  span: Span;
  /** 1-based line of the statement. */
  line: number;
  /** The margin's unit symbol ("V", "A", "W", "" for a ratio); null when it is a plain number of no known unit. */
  unit: string | null;
  /** The condition's comparisons mix units: no single margin. */
  mixedUnits: boolean;
  condition: ConditionTree | null;
  check: DeviceCheck | null;
  /** How many operand values the condition's comparisons have. */
  operandCount: number;
  /** The operand values at a solved point into out[0, operandCount); NaN where not a number. */
  operands(
    ctx: ProbeContext,
    params: Readonly<Record<string, number>>,
    settings: Settings,
    probes: Readonly<Record<string, number>>,
    out: Float64Array,
  ): void;
}

export type BindingTarget =
  | { kind: "rail"; node: number }
  | { kind: "inject"; index: number }
  | { kind: "w"; index: number }
  | { kind: "l"; index: number }
  | { kind: "setting"; name: "kappa" | "i0" | "vt0" | "ispec" };

/**
 * A value that depends on params or on temp (through `ut`). `evaluate` gets
 * the full scope of the point: every param, plus `temp`, `ut`, `kappa`.
 */
export interface Binding {
  target: BindingTarget;
  /** Names the value depends on, transitively (params, "temp", "ut", "kappa"). */
  dependsOn: string[];
  evaluate(scope: Readonly<Record<string, number>>): number;
}

export interface Network {
  name: string | null;
  settings: Settings;
  params: ParamDef[];
  nodes: NodeTable;
  rails: RailDef[];
  devices: DeviceTable;
  injects: InjectTable;
  probes: Probe[];
  sweeps: Sweep[];
  mismatch: Mismatch | null;
  bindings: Binding[];
  expectations: Expectation[];
  /** `seek` statements: goal-seeks of a param (src/solver/goal-seek.ts). */
  seeks: Seek[];
}

/** `seek PARAM from=A to=B measure=PROBE target=T`: the value of PARAM in [A, B] at which PROBE equals T. */
export interface Seek {
  param: string;
  from: number;
  to: number;
  probe: string;
  target: number;
  span: Span;
}

export interface ElaborationResult {
  /** Null when there are errors that make the network unusable. */
  network: Network | null;
  diagnostics: Diagnostic[];
  /** True when no diagnostic is an error. */
  ok: boolean;
  /** The `network NAME` statement's name, also when `network` is null. */
  name?: string | null;
}
