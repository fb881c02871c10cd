/** How the compare page writes a diffed value and its relative change. */
import { formatEng } from "@/app/lib/format";
import type { Quantity } from "@/app/lib/review/results-diff";

const UNIT: Record<Quantity, string> = { voltage: "V", current: "A", ic: "", value: "" };

/** A diffed value with the unit of its quantity; a non-finite value as JavaScript writes it. */
export function formatDiffValue(v: number, quantity: Quantity): string {
  return Number.isFinite(v) ? formatEng(v, UNIT[quantity] ?? "", 4) : String(v);
}

/** A relative change as a signed percentage ("+1.23 %"), ±∞ from zero, "—" when unknown. */
export function formatRelative(r: number): string {
  if (!Number.isFinite(r)) return Number.isNaN(r) ? "—" : r > 0 ? "+∞" : "−∞";
  return `${r >= 0 ? "+" : ""}${(r * 100).toPrecision(3)} %`;
}
