/**
 * Engineering notation for the result pages and exports: a mantissa in
 * [1, 1000) with 3 significant digits (by default), an SI prefix and the unit:
 * `formatEng(1.234e-8, "A")` → "12.3 nA". Pure; used on server and client.
 */

const PREFIXES: [number, string][] = [
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
 * `value` in engineering notation with `digits` significant digits. Zero is "0 unit";
 * NaN (unknown) is "—"; values beyond the prefix table fall back to e-notation.
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
  if (!prefix) return `${sign}${a.toExponential(digits - 1)}${sep}${unit}`;
  // toPrecision would switch to e-notation for a mantissa like 783 at 2 digits: fix the decimals instead.
  const decimals = Math.max(0, digits - (Math.floor(Math.log10(mantissa)) + 1));
  return `${sign}${trimZeros(mantissa.toFixed(decimals))}${sep}${prefix[1]}${unit}`;
}

/** "12.30" → "12.3", "1.00" → "1", "120" stays. */
function trimZeros(s: string): string {
  return s.includes(".") && !s.includes("e") ? s.replace(/\.?0+$/, "") : s;
}

/** Plain numbers (params, counts, residuals) with `digits` significant digits, e-notation outside 1e-3..1e6. */
export function formatNumber(value: number, digits = 4): string {
  if (Number.isNaN(value)) return "—";
  if (value === 0) return "0";
  const a = Math.abs(value);
  if (a >= 1e-3 && a < 1e6) return trimZeros(value.toPrecision(digits));
  return value.toExponential(digits - 1);
}

/** A duration in ms as "850 ms", "12.4 s", "3 min 5 s". */
export function formatDuration(ms: number): string {
  if (!Number.isFinite(ms) || ms < 0) return "—";
  if (ms < 1000) return `${Math.round(ms)} ms`;
  if (ms < 60_000) return `${(ms / 1000).toPrecision(3)} s`;
  const s = Math.round(ms / 1000);
  return `${Math.floor(s / 60)} min ${s % 60} s`;
}
