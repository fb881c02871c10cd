/**
 * The one way Runnel writes a number for a reader: every table, card, plot
 * axis and legend goes through `formatValue` (or `formatTick` for axis ticks),
 * so one value reads the same everywhere. Pure; used on server and client.
 *
 * The rule: a value with a unit (V, A, W, K … as the language's unit checker
 * infers it, src/lang/units.ts unitSymbol) has 4 significant digits and either
 * an SI prefix (`12.34 nA`, notation "si", the default) or plain scientific
 * notation (`1.234e-8 A`, notation "sci"); the reader picks the notation with
 * the toggle in the header (app/ui/notation.tsx). A ratio (unit "") or a value
 * whose unit is not known (null) is a plain number (`0.3382`), in e-notation
 * outside 0.001…1,000,000. Outside the prefix table (quecto … tera) SI falls
 * back to scientific. Unknown (NaN, null) is "—".
 */

/** How values with a unit are written: SI prefixes ("12.34 nA") or plain scientific notation ("1.234e-8 A"). */
export type Notation = "si" | "sci";

/** Significant digits of a value unless a caller asks otherwise. */
export const DEFAULT_DIGITS = 4;

export interface FormatOptions {
  /** Significant digits (default DEFAULT_DIGITS). */
  digits?: number;
  /** Default "si". */
  notation?: Notation;
}

/**
 * `value` with its unit by the module's rule. `unit`: a symbol ("V", "A",
 * "W", "K", "V/A"…), "" for a ratio, null or undefined when not known.
 */
export function formatValue(
  value: number | null | undefined,
  unit: string | null | undefined,
  options: FormatOptions = {},
): string {
  const digits = options.digits ?? DEFAULT_DIGITS;
  if (value === null || value === undefined || Number.isNaN(value)) return "—";
  if (!unit) return formatNumber(value, digits);
  if (options.notation === "sci") return formatScientific(value, unit, digits);
  return formatEng(value, unit, digits);
}

/** `value` as "1.234e-8 A": `digits` significant digits, trailing zeros of the mantissa dropped. */
export function formatScientific(value: number, unit = "", digits = DEFAULT_DIGITS): string {
  const sep = unit ? " " : "";
  if (Number.isNaN(value)) return "—";
  if (!Number.isFinite(value)) return `${value > 0 ? "" : "−"}∞${sep}${unit}`;
  if (value === 0) return `0${sep}${unit}`;
  const [m, e] = Math.abs(value)
    .toExponential(digits - 1)
    .split("e");
  const exp = Number(e);
  return `${value < 0 ? "−" : ""}${trimZeros(m)}${exp === 0 ? "" : `e${exp}`}${sep}${unit}`;
}

/**
 * An axis tick: as formatValue, with as few digits as tell the ticks apart
 * (`550 mV`, `1 nA`, `2.5 nA`). `integer`: the axis counts (a tap index, a
 * sample number): plain integers.
 */
export function formatTick(
  value: number,
  unit: string | null | undefined,
  notation: Notation = "si",
  integer = false,
): string {
  if (integer) return Number.isInteger(value) ? formatCount(value) : "";
  return formatValue(value, unit, { notation, digits: DEFAULT_DIGITS });
}

/** A whole count ("12,345"). */
export function formatCount(n: number): string {
  return Number.isFinite(n) ? n.toLocaleString("en-US") : "—";
}

/** SI prefixes (BIPM SI Brochure, 9th ed. 2019, and the 2022 additions ronto and quecto): quecto … tera. */
const PREFIXES: [number, string][] = [
  [-30, "q"],
  [-27, "r"],
  [-24, "y"],
  [-21, "z"],
  [-18, "a"],
  [-15, "f"],
  [-12, "p"],
  [-9, "n"],
  [-6, "µ"],
  [-3, "m"],
  [0, ""],
  [3, "k"],
  [6, "M"],
  [9, "G"],
  [12, "T"],
];

/**
 * `value` in engineering notation with `digits` significant digits: a mantissa in [1, 1000), an SI prefix and
 * the unit (`formatEng(1.234e-8, "A", 4)` → "12.34 nA"). Zero is "0 unit"; NaN (unknown) is "—"; values beyond
 * the prefix table fall back to scientific notation. Pages use formatValue, which applies the module's rule.
 */
export function formatEng(value: number, unit = "", digits = 3): string {
  const sep = unit ? " " : "";
  if (Number.isNaN(value)) return "—";
  if (!Number.isFinite(value)) return `${value > 0 ? "" : "−"}∞${sep}${unit}`;
  if (value === 0) return `0${sep}${unit}`;
  const sign = value < 0 ? "−" : "";
  const a = Math.abs(value);
  // Round first, so 999.96 µ becomes 1.00 m rather than 1000 µ.
  let exp3 = Math.floor(Math.log10(a) / 3) * 3;
  let mantissa = Number((a / 10 ** exp3).toPrecision(digits));
  if (mantissa >= 1000) {
    exp3 += 3;
    mantissa = Number((a / 10 ** exp3).toPrecision(digits));
  }
  const prefix = PREFIXES.find(([e]) => e === exp3);
  if (!prefix) return formatScientific(value, unit, digits);
  // toPrecision would switch to e-notation for a mantissa like 783 at 2 digits: fix the decimals instead.
  const decimals = Math.max(0, digits - (Math.floor(Math.log10(mantissa)) + 1));
  return `${sign}${trimZeros(mantissa.toFixed(decimals))}${sep}${prefix[1]}${unit}`;
}

/** "12.30" → "12.3", "1.00" → "1", "120" stays. */
function trimZeros(s: string): string {
  return s.includes(".") && !s.includes("e") ? s.replace(/\.?0+$/, "") : s;
}

/** Plain numbers (ratios, values of unknown unit) with `digits` significant digits, e-notation outside 1e-3..1e6. */
export function formatNumber(value: number, digits = DEFAULT_DIGITS): string {
  if (Number.isNaN(value)) return "—";
  if (!Number.isFinite(value)) return value > 0 ? "∞" : "−∞";
  if (value === 0) return "0";
  const a = Math.abs(value);
  const sign = value < 0 ? "−" : "";
  if (a >= 1e-3 && a < 1e6) return sign + trimZeros(a.toPrecision(digits));
  return formatScientific(value, "", digits);
}

/** A duration in ms as "850 ms", "12.4 s", "3 min 5 s". */
export function formatDuration(ms: number): string {
  if (!Number.isFinite(ms) || ms < 0) return "—";
  if (ms < 1000) return `${Math.round(ms)} ms`;
  if (ms < 60_000) return `${(ms / 1000).toPrecision(3)} s`;
  const s = Math.round(ms / 1000);
  return `${Math.floor(s / 60)} min ${s % 60} s`;
}

/** The cookie that keeps a reader's notation (set by the header's toggle, read by server and client rendering). */
export const NOTATION_COOKIE = "runnel-notation";

/** A cookie value as a Notation ("si" unless it says "sci"). */
export function parseNotation(value: string | null | undefined): Notation {
  return value === "sci" ? "sci" : "si";
}

/** `v` rounded to `digits` significant digits (integers, ±∞ and NaN unchanged). */
export function roundTo(v: number, digits: number): number {
  return Number.isFinite(v) && !Number.isInteger(v) ? Number(v.toPrecision(digits)) : v;
}

/** A JSON.stringify replacer writing every number at `digits` significant digits (`roundTo`). */
export function roundingReplacer(digits: number): (key: string, v: unknown) => unknown {
  return (_key, v) => (typeof v === "number" ? roundTo(v, digits) : v);
}

/**
 * A JSON.stringify replacer for values sent only to be plotted and read at 4 significant digits: a fractional
 * number keeps 7 (about half the characters of the 17 JavaScript writes); integers, ±∞ and NaN are left alone.
 */
export const plotPrecision = roundingReplacer(7);
