/** How the compare page writes a diffed value, its relative change and the point where it was found. */
import { formatValue, type Notation } from "@/app/lib/format";
import type { Quantity } from "@/app/lib/review/results-diff";
import type { PointRef } from "@/app/lib/review/sweep-compare";

const UNIT: Record<Quantity, string> = { voltage: "V", current: "A", ic: "", value: "" };

/** A value with its unit (SI prefix, 4 significant digits); a ratio or a value of unknown unit as a plain number. */
export function formatWithUnit(
  v: number | null | undefined,
  unit: string | null | undefined,
  digits = 4,
  notation: Notation = "si",
): string {
  if (v === null || v === undefined || Number.isNaN(v)) return "—";
  if (!Number.isFinite(v)) return v > 0 ? "∞" : "−∞";
  return formatValue(v, unit, { notation, digits });
}

/** A diffed value with the unit of its quantity; a non-finite value as JavaScript writes it. */
export function formatDiffValue(v: number, quantity: Quantity, notation: Notation): string {
  return Number.isFinite(v) ? formatValue(v, UNIT[quantity] ?? "", { notation }) : String(v);
}

/** A signed change with its unit ("+10.48 mV", "−16.67 nA"). */
export function formatChange(
  v: number | null | undefined,
  unit: string | null | undefined,
  notation: Notation = "si",
): string {
  if (v === null || v === undefined || Number.isNaN(v)) return "—";
  const s = formatWithUnit(Math.abs(v), unit, 4, notation);
  return v === 0 ? s : `${v > 0 ? "+" : "−"}${s}`;
}

/** A relative change as a signed percentage ("+1.23 %"), "from 0" when the older value was zero, "—" when unknown. */
export function formatRelative(r: number | null | undefined): string {
  if (r === null || r === undefined || Number.isNaN(r)) return "—";
  if (!Number.isFinite(r)) return "from 0";
  return `${r >= 0 ? "+" : "−"}${Math.abs(r * 100).toPrecision(3)} %`;
}

/** Where a value was found: the swept values with units, then the mismatch sample ("iin = 100 nA · sample 12"). */
export function formatPointRef(at: PointRef | null | undefined, notation: Notation = "si"): string {
  if (!at) return "—";
  const parts = at.params.map((p) => `${p.name} = ${formatWithUnit(p.value, p.unit, 4, notation)}`);
  if (at.sample !== null) parts.push(`sample ${at.sample}`);
  return parts.length ? parts.join(" · ") : "the operating point";
}
