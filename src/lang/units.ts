/**
 * Dimensions of values in Runnel expressions: powers of volt, ampere and kelvin.
 *
 * Soundness rule: only a clash between two KNOWN dimensions is an error.
 * - `known`: a literal with a unit symbol (`450mV`), `ut`, `kappa`, `temp`,
 *   voltage(), current(), and whatever is derived from them.
 * - `loose`: a bare number (`0.45`), a loop variable or a function result
 *   (`exp(...)`). The unit symbol of a number is optional (docs/language.md, Lexical rules), so a
 *   bare number may stand for any unit its use needs: in `+`/`-` it takes the
 *   other side's dimension, and a product or quotient with a loose factor is
 *   loose too (`dv/ut` with `param dv = 0.02` may be dimensionless, and
 *   `1e-9*voltage(x)` may be a current).
 * - `unknown`: nothing can be said (e.g. `x ^ y` with a non-constant y); never an error.
 */
export type Dim = { kind: "unknown" } | { kind: "loose" } | { kind: "known"; v: number; a: number; k: number };

export const UNKNOWN: Dim = { kind: "unknown" };
export const LOOSE: Dim = { kind: "loose" };
export const DIMENSIONLESS: Dim = { kind: "known", v: 0, a: 0, k: 0 };
export const VOLT: Dim = { kind: "known", v: 1, a: 0, k: 0 };
export const AMPERE: Dim = { kind: "known", v: 0, a: 1, k: 0 };
export const KELVIN: Dim = { kind: "known", v: 0, a: 0, k: 1 };

export function known(v: number, a: number, k: number): Dim {
  return { kind: "known", v, a, k };
}

export function unitDim(symbol: string): Dim {
  return symbol === "V" ? VOLT : symbol === "A" ? AMPERE : symbol === "K" ? KELVIN : LOOSE;
}

function isDimensionless(d: Dim): boolean {
  return d.kind === "known" && d.v === 0 && d.a === 0 && d.k === 0;
}

/** True when `d` is known and not dimensionless (a physical quantity). */
export function hasUnit(d: Dim): boolean {
  return d.kind === "known" && !isDimensionless(d);
}

export function sameDim(x: Dim, y: Dim): boolean {
  return x.kind === "known" && y.kind === "known" && x.v === y.v && x.a === y.a && x.k === y.k;
}

/** Two dimensions are compatible unless both are known and differ. */
export function compatible(x: Dim, y: Dim): boolean {
  return x.kind !== "known" || y.kind !== "known" || sameDim(x, y);
}

/**
 * x·y (sign 1) or x/y (sign -1). A bare number carries whatever unit its use
 * needs, so anything times or over a bare number stays a bare number:
 * `2*kappa` may stand for volts as much as `2` does, and `0.02/ut` may be
 * dimensionless (0.02 V) as much as `0.02V/ut` is.
 */
export function mulDim(x: Dim, y: Dim, sign: 1 | -1): Dim {
  if (x.kind === "unknown" || y.kind === "unknown") return UNKNOWN;
  if (x.kind !== "known" || y.kind !== "known") return LOOSE;
  return known(x.v + sign * y.v, x.a + sign * y.a, x.k + sign * y.k);
}

/** Sum of two compatible dimensions (caller checks `compatible` first). */
export function addDim(x: Dim, y: Dim): Dim {
  if (x.kind === "known") return x;
  if (y.kind === "known") return y;
  if (x.kind === "unknown" || y.kind === "unknown") return UNKNOWN;
  return LOOSE;
}

/** x ^ e for a constant exponent e (NaN when not constant). */
export function powDim(x: Dim, e: number): Dim {
  if (x.kind !== "known") return x.kind === "loose" ? LOOSE : UNKNOWN;
  if (isDimensionless(x)) return DIMENSIONLESS;
  if (!Number.isFinite(e)) return UNKNOWN;
  const v = x.v * e,
    a = x.a * e,
    k = x.k * e;
  if (!Number.isInteger(v) || !Number.isInteger(a) || !Number.isInteger(k)) return UNKNOWN;
  return known(v, a, k);
}

function power(symbol: string, n: number): string {
  return n === 1 ? symbol : `${symbol}^${n}`;
}

/** Symbolic form: "V", "A", "V/K", "V·A", "1/A", "dimensionless". */
export function formatDim(d: Dim): string {
  if (d.kind !== "known") return "a plain number";
  if (isDimensionless(d)) return "dimensionless";
  const num: string[] = [];
  const den: string[] = [];
  for (const [s, n] of [
    ["V", d.v],
    ["A", d.a],
    ["K", d.k],
  ] as const) {
    if (n > 0) num.push(power(s, n));
    else if (n < 0) den.push(power(s, -n));
  }
  const top = num.length ? num.join("·") : "1";
  return den.length ? `${top}/${den.join("·")}` : top;
}

/**
 * The unit symbol a result of dimension `d` is shown with: "V", "A", "K", "W" (V·A), "" for a dimensionless
 * ratio, the symbolic form ("V/A", "A²") for other known dimensions, and null when the dimension is not known
 * (a bare number, whose unit is whatever its use needs).
 */
export function unitSymbol(d: Dim): string | null {
  if (d.kind !== "known") return null;
  if (isDimensionless(d)) return "";
  if (sameDim(d, known(1, 1, 0))) return "W";
  return formatDim(d);
}

/** Words for messages: "volts (V)", "amperes (A)", "kelvin (K)", or the symbolic form. */
export function describeDim(d: Dim): string {
  if (sameDim(d, VOLT)) return "volts (V)";
  if (sameDim(d, AMPERE)) return "amperes (A)";
  if (sameDim(d, KELVIN)) return "kelvin (K)";
  if (d.kind === "known" && isDimensionless(d)) return "a dimensionless number";
  return formatDim(d);
}
