/**
 * The columns a line plot draws, from its curves and marks: aligned on one x
 * (app/ui/plots/align-marks.ts), non-finite values as gaps, and on a log axis
 * the rule for values ≤ 0: they are left out (gaps) and counted, except for a
 * curve with no positive value at all but negative ones (a current flowing the
 * other way), which is drawn as its magnitude and says so.
 */
import { alignMarks } from "./align-marks";
import type { AxisSpec, Curve, Marks } from "./plot-types";

export type Cell = number | null | undefined;

export interface PlotColumns {
  x: number[];
  /** One column per curve, then one per mark series; null breaks a line, undefined is joined over. */
  columns: Cell[][];
  /** Values left out because the y axis is logarithmic and they are ≤ 0 (x values ≤ 0 on a log x axis, likewise). */
  dropped: number;
  /** Curves drawn as their magnitude (indices into `curves`). */
  magnitude: number[];
}

export function plotColumns(
  x: number[],
  curves: Curve[],
  marks: Marks[],
  xAxis: AxisSpec,
  yAxis: AxisSpec,
): PlotColumns {
  const aligned = alignMarks(x, curves, marks);
  let dropped = 0;
  const magnitude: number[] = [];
  const xs = xAxis.log
    ? aligned.x.map((v) => {
        if (v > 0) return v;
        dropped++;
        return NaN;
      })
    : aligned.x;
  const clean = (col: Cell[], abs: boolean): Cell[] =>
    col.map((v) => {
      if (v === undefined) return undefined;
      if (v === null || !Number.isFinite(v)) return null;
      const w = abs ? Math.abs(v) : v;
      if (yAxis.log && !(w > 0)) {
        dropped++;
        return null;
      }
      return w;
    });
  const columns: Cell[][] = aligned.curves.map((col, i) => {
    const finite = col.filter((v): v is number => typeof v === "number" && Number.isFinite(v));
    const abs = !!yAxis.log && finite.length > 0 && finite.every((v) => v <= 0) && finite.some((v) => v < 0);
    if (abs) magnitude.push(i);
    return clean(col, abs);
  });
  for (const col of aligned.marks) columns.push(clean(col, false));
  return { x: xs, columns, dropped, magnitude };
}

/** The data as CSV: a header of axis titles and series labels, then one row per x (full precision; empty where a series has no value). */
export function plotCsv(xTitle: string, labels: string[], x: number[], columns: Cell[][]): string {
  const quote = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
  const lines = [[xTitle, ...labels].map(quote).join(",")];
  for (let i = 0; i < x.length; i++) {
    const row = [Number.isFinite(x[i]) ? String(x[i]) : ""];
    for (const c of columns) {
      const v = c[i];
      row.push(typeof v === "number" && Number.isFinite(v) ? String(v) : "");
    }
    lines.push(row.join(","));
  }
  return lines.join("\n") + "\n";
}
