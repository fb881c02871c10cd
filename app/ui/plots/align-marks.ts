import type { Curve, Marks } from "./plot-types";

/**
 * The aligned columns of curves and marks. Without marks, x and the curves are
 * passed unchanged. With marks, x is the sorted union; a value missing at an
 * added x is `undefined`, which uPlot joins over (only `null` breaks a line).
 */
export function alignMarks(
  x: number[],
  curves: Curve[],
  marks: Marks[],
): { x: number[]; curves: (number | null | undefined)[][]; marks: (number | undefined)[][] } {
  if (marks.length === 0) return { x, curves: curves.map((c) => c.values), marks: [] };
  const xs = [...new Set([...x, ...marks.flatMap((m) => m.x)])].filter(Number.isFinite).sort((a, b) => a - b);
  const at = new Map(xs.map((v, i) => [v, i]));
  const column = <T>(px: number[], py: T[]) => {
    const out = new Array<T | undefined>(xs.length).fill(undefined);
    px.forEach((v, i) => {
      const j = at.get(v);
      if (j !== undefined) out[j] = py[i];
    });
    return out;
  };
  return { x: xs, curves: curves.map((c) => column(x, c.values)), marks: marks.map((m) => column(m.x, m.y)) };
}
