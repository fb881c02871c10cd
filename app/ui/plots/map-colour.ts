/**
 * The Map's colour scale: viridis from d3-scale-chromatic, a perceptually
 * uniform sequential map (equal steps in value look like equal steps in
 * colour, and it stays readable in grey and for the common colour-vision
 * deficiencies; van der Walt & Smith, matplotlib's viridis, 2015).
 */
import { interpolateViridis } from "d3-scale-chromatic";

/** Colour of t in [0, 1] (clamped) as a CSS colour. */
export function mapColour(t: number): string {
  return interpolateViridis(Math.max(0, Math.min(1, Number.isFinite(t) ? t : 0)));
}

/** `n` evenly spaced colours of the scale, for a CSS gradient or a legend. */
export function mapStops(n = 11): string[] {
  return Array.from({ length: n }, (_, i) => mapColour(i / (n - 1)));
}

/** Where `v` sits in [lo, hi] on a linear or log scale, in [0, 1]; NaN for a value the scale cannot place. */
export function mapPosition(v: number, lo: number, hi: number, log: boolean): number {
  if (!Number.isFinite(v) || (log && !(v > 0))) return NaN;
  const t = log ? (Math.log10(v) - Math.log10(lo)) / (Math.log10(hi) - Math.log10(lo)) : (v - lo) / (hi - lo);
  return Number.isFinite(t) ? Math.max(0, Math.min(1, t)) : 0.5;
}

/** Which of `n` axis ticks to label so that at most `max` labels show (every k-th, always the first and last). */
export function labelEvery(n: number, max: number): number {
  return Math.max(1, Math.ceil(n / Math.max(1, max)));
}

/** The range a map's colours span: the finite values' least and greatest (positive ones only on a log scale, the
 * others counted as skipped); 0…1 when there is none. */
export function mapRange(values: (number | null)[][], log: boolean): { lo: number; hi: number; skipped: number } {
  let lo = Infinity;
  let hi = -Infinity;
  let skipped = 0;
  for (const row of values)
    for (const v of row) {
      if (v === null || !Number.isFinite(v)) continue;
      if (log && !(v > 0)) {
        skipped++;
        continue;
      }
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  return Number.isFinite(lo) ? { lo, hi, skipped } : { lo: 0, hi: 1, skipped };
}
