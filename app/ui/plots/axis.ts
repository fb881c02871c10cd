/**
 * Axis titles and tick labels for the plots: the quantity and its unit
 * ("current out5 (A)", "vh (V)", "split (ratio)"), ticks through the one
 * formatting rule (app/lib/format.ts formatTick: SI prefixes or scientific,
 * integers on a counting axis, only labelled decades on a long log axis).
 */
import { formatTick, type Notation } from "@/app/lib/format";
import { decadeStep, labelledDecade, MAX_LABELLED_DECADES } from "./log-ticks";
import type { AxisSpec } from "./plot-types";

/** The quantity a unit measures, as a word for labels ("A" → "current"); "" when there is no single word. */
export function quantityOf(unit: string | null): string {
  switch (unit) {
    case "A":
      return "current";
    case "V":
      return "voltage";
    case "W":
      return "power";
    case "K":
      return "temperature";
    case "":
      return "ratio";
    default:
      return "";
  }
}

/** "current out5", "voltage x3", "ratio split", or the bare name when the unit is not known. */
export function quantityLabel(name: string, unit: string | null): string {
  const q = quantityOf(unit);
  return q ? `${q} ${name}` : name;
}

/** The axis title: label and unit in parentheses ("current out5 (A)"); a ratio or unknown unit adds nothing. */
export function axisTitle(a: AxisSpec): string {
  return a.unit ? `${a.label} (${a.unit})` : a.label;
}

/**
 * Tick labels for `splits` on axis `a`: a log axis labels decades only (every
 * k-th on a long one, at most `maxLabels`, so labels never collide), a counting axis integers only.
 */
export function tickLabels(
  a: AxisSpec,
  splits: number[],
  notation: Notation,
  maxLabels = MAX_LABELLED_DECADES,
): string[] {
  if (a.log) {
    const pos = splits.filter((v) => v > 0);
    const decades = pos.length ? Math.log10(pos[pos.length - 1] / pos[0]) : 0;
    const step = decadeStep(decades, maxLabels);
    return splits.map((v) => (labelledDecade(v, step) ? formatTick(v, a.unit, notation) : ""));
  }
  return splits.map((v) => (v == null ? "" : formatTick(v, a.unit, notation, a.integer)));
}

/** Tick increments for an integer axis (uPlot `incrs`): 1, 2, 5, 10, 20, 50, … */
export const INTEGER_INCREMENTS = Array.from({ length: 10 }, (_, e) => [1, 2, 5].map((m) => m * 10 ** e)).flat();
