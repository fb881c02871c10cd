/**
 * The words a network is written in, with their defaults, units and bounds: the settings of `set`, the element
 * kinds and their pins, the default device size, the options of `mismatch`, the limits of one elaboration and the
 * inversion-coefficient bound of weak inversion. The language (elaboration and its syntax messages), the editor
 * (completion) and the solver read them from here; docs/language.md states them for people.
 */
import type { CheckKind, Model, Settings } from "./network";
import { thermalVoltage } from "./point";
import { AMPERE, DIMENSIONLESS, type Dim, KELVIN, VOLT } from "./units";

// ---------------------------------------------------------------- settings

/** The settings of `set NAME = VALUE`, in the order they are listed to users. */
export const SETTING_NAMES = ["kappa", "temp", "i0", "vt0", "ispec", "model"] as const;
export type SettingName = (typeof SETTING_NAMES)[number];
export interface SettingInfo {
  /** The dimension its value must have; null for `model`, whose value is a word. */
  dim: Dim | null;
  /** What the value is, as a hint after a wrong value. */
  what: string;
  /** One line for completion lists. */
  detail: string;
}

export const SETTINGS: Readonly<Record<SettingName, SettingInfo>> = {
  kappa: { dim: DIMENSIONLESS, what: "kappa is a plain number", detail: "subthreshold slope factor (default 0.7)" },
  temp: { dim: KELVIN, what: "temp is a temperature in kelvin", detail: "temperature in kelvin (default 300K)" },
  i0: {
    dim: AMPERE,
    what: "i0 is a current in amperes",
    detail: "pre-exponential current of a W/L = 1 device (default 1f)",
  },
  vt0: { dim: VOLT, what: "vt0 is a voltage in volts", detail: "threshold voltage for the all-region model" },
  ispec: { dim: AMPERE, what: "ispec is a current in amperes", detail: "specific current of a W/L = 1 device" },
  model: { dim: null, what: "set model = weak (the default) or set model = ekv", detail: "weak (default) or ekv" },
};

/** The device models of `set model = …`, the first the default, with a line for completion lists. */
export const MODELS = ["weak", "ekv"] as const satisfies readonly Model[];
export const MODEL_DETAIL: Readonly<Record<Model, string>> = {
  weak: "weak-inversion exponential",
  ekv: "all-region EKV interpolation",
};

/** Default subthreshold slope factor κ. */
export const DEFAULT_KAPPA = 0.7;
/** Default temperature, kelvin. */
export const DEFAULT_TEMP = 300;
/** Default pre-exponential current of a W/L = 1 device, amperes. */
export const DEFAULT_I0 = 1e-15;

/** The settings of a network with no `set` statement (a fresh object each call). */
export function defaultSettings(): Settings {
  return {
    kappa: DEFAULT_KAPPA,
    temp: DEFAULT_TEMP,
    ut: thermalVoltage(DEFAULT_TEMP),
    i0: DEFAULT_I0,
    vt0: null,
    ispec: null,
    model: MODELS[0],
  };
}

/** Whether `name` is a setting (settings are not values: expressions cannot read them by that name). */
export function isSetting(name: string): name is SettingName {
  return (SETTING_NAMES as readonly string[]).includes(name);
}

// ---------------------------------------------------------------- elements and pins

/** Default channel width and length of a device, metres (W/L = 1). */
export const DEFAULT_W = 1e-6;
export const DEFAULT_L = 1e-6;

export type ElementKind = "nfet" | "pfet" | "inject";

/** The pins of each element kind, required ones first, in the order they are usually written. */
export const ELEMENT_PINS: Readonly<Record<ElementKind, { required: readonly string[]; optional: readonly string[] }>> =
  {
    nfet: { required: ["gate", "source", "drain"], optional: ["bulk", "w", "l"] },
    pfet: { required: ["gate", "source", "drain", "well"], optional: ["w", "l"] },
    inject: { required: ["from", "to", "value"], optional: [] },
  };

/** Every pin of an element kind, in the order they are usually written. */
export function pinsOf(kind: ElementKind): readonly string[] {
  return [...ELEMENT_PINS[kind].required, ...ELEMENT_PINS[kind].optional];
}

/** Pins whose value is a node name (all others take an expression). */
export const NODE_PINS: ReadonlySet<string> = new Set(["gate", "source", "drain", "bulk", "well", "from", "to"]);

/** What each pin's value is, for completion lists. */
export const PIN_DETAIL: Readonly<Record<string, string>> = {
  gate: "node",
  source: "node",
  drain: "node",
  bulk: "node (default: substrate at 0 V)",
  well: "node the pfet's voltages are referenced to",
  w: "width in metres (default 1u)",
  l: "length in metres (default 1u)",
  from: "node the current leaves",
  to: "node the current enters",
  value: "amperes",
};

/** The options of `mismatch`, in the order they are usually written. */
export const MISMATCH_OPTIONS = ["runs", "seed", "avt"] as const;
/** The options of `seek`, in the order they are usually written. */
export const SEEK_OPTIONS = ["from", "to", "measure", "target"] as const;
/** The seed of a `mismatch` statement without one. */
export const DEFAULT_SEED = 1;

// ---------------------------------------------------------------- validity

/**
 * The inversion coefficient below which a device is in weak inversion (common practice: weak below 0.1, moderate
 * 0.1 to 10, strong above 10; Enz, Krummenacher, Vittoz 1995, see docs/physics.md, "EKV all-region model").
 */
export const WEAK_INVERSION_IC = 0.1;
/** The inversion coefficient above which a device is in strong inversion (same source). */
export const STRONG_INVERSION_IC = 10;

// ---------------------------------------------------------------- expectations

/** The device-set checks of `expect NAME = CHECK devices=PATTERN`, in the order they are listed to users. */
export const CHECKS = ["saturated", "unsaturated", "weak", "reverse"] as const satisfies readonly CheckKind[];

/** What each check requires of every device it covers, for completion lists and docs. */
export const CHECK_DETAIL: Readonly<Record<CheckKind, string>> = {
  saturated: "every device saturated: V_DS > 4 U_T",
  unsaturated: "every device unsaturated by design: V_DS ≤ 4 U_T",
  weak: `every device in weak inversion: IC below \`below\` (default ${WEAK_INVERSION_IC}; needs ispec and vt0)`,
  reverse: "no source or drain junction forward-biased",
};

/** The options of a device-set check; `devices` is required, `below` belongs to `weak`. */
export const CHECK_OPTIONS = ["devices", "below"] as const;

/** A junction counts as forward-biased beyond this, volts (the solver's validity check uses the same). */
export const JUNCTION_TOLERANCE = 1e-6;

// ---------------------------------------------------------------- limits

/** Bounds on the work of one elaboration; exceeding one is an error, never a hang. */
export interface Limits {
  /** Longest source text, in UTF-16 code units. */
  maxSourceLength: number;
  /** Most elaborated devices. */
  maxDevices: number;
  /** Most rails, injects and probes (each). */
  maxElements: number;
  /** Most statement executions plus loop iterations, over the whole file. */
  maxWork: number;
  /** Deepest expression nesting. */
  maxExpressionDepth: number;
  /** Deepest nesting of for blocks. */
  maxLoopDepth: number;
  /** Most diagnostics kept. */
  maxDiagnostics: number;
  /** Most values in one sweep. */
  maxSweepValues: number;
  /** Most solves: grid points times mismatch runs. */
  maxPoints: number;
}

export const DEFAULT_LIMITS: Readonly<Limits> = {
  maxSourceLength: 2 * 1024 * 1024,
  maxDevices: 2_000_000,
  maxElements: 2_000_000,
  maxWork: 20_000_000,
  maxExpressionDepth: 200,
  maxLoopDepth: 64,
  maxDiagnostics: 1000,
  maxSweepValues: 100_000,
  maxPoints: 1_000_000,
};
