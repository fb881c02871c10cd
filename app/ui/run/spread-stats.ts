/**
 * Statistics of a probe over mismatch samples. Quantiles by linear
 * interpolation between order statistics (Hyndman & Fan, "Sample quantiles in
 * statistical packages", 1996, definition 7, the default of R and NumPy);
 * σ is the sample standard deviation (n − 1).
 */

export interface SpreadStats {
  n: number;
  mean: number;
  sd: number;
  q05: number;
  q95: number;
  /** σ/|μ|, only where the mean is clearly non-zero (|μ| > 3 standard errors, σ/√n); else null. */
  relative: number | null;
}

/** The p-quantile (0…1) of sorted values (definition 7). */
export function quantile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export function spreadStats(values: readonly (number | null)[]): SpreadStats {
  const v = values.filter((x): x is number => x !== null && Number.isFinite(x)).sort((a, b) => a - b);
  const n = v.length;
  if (n === 0) return { n, mean: NaN, sd: NaN, q05: NaN, q95: NaN, relative: null };
  const mean = v.reduce((a, b) => a + b, 0) / n;
  const sd = n > 1 ? Math.sqrt(v.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1)) : 0;
  const clearlyNonZero = mean !== 0 && Math.abs(mean) > (3 * sd) / Math.sqrt(n);
  return {
    n,
    mean,
    sd,
    q05: quantile(v, 0.05),
    q95: quantile(v, 0.95),
    relative: clearlyNonZero ? sd / Math.abs(mean) : null,
  };
}
