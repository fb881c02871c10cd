/**
 * Statistics of two samples for comparing Monte Carlo runs: summaries (mean,
 * standard deviation, quantiles), histograms on shared bins, and the
 * two-sample Kolmogorov–Smirnov test. Pure; non-finite values are dropped
 * before anything is computed (the summaries say how many were kept).
 *
 * Methods
 * - Quantiles: linear interpolation between order statistics, the
 *   "type 7" definition of R. J. Hyndman and Y. Fan, "Sample quantiles in
 *   statistical packages", The American Statistician 50(4), 1996 (the default
 *   of R and NumPy).
 * - Standard deviation: the sample one (divisor n − 1), by Welford's
 *   single-pass update (B. P. Welford, Technometrics 4(3), 1962).
 * - Kolmogorov–Smirnov, two samples (N. Smirnov, "Table for estimating the
 *   goodness of fit of empirical distributions", Ann. Math. Stat. 19, 1948):
 *   D = sup |F₁ − F₂|. The p-value is exact while n·m ≤ EXACT_LIMIT, counting
 *   the lattice paths that stay strictly inside |i/n − j/m| < D
 *   (J. L. Hodges, "The significance probability of the Smirnov two-sample
 *   test", Arkiv för Matematik 3, 1958), carried as probabilities so large
 *   binomials never overflow; beyond that, the asymptotic Kolmogorov
 *   distribution with Stephens' small-sample correction
 *   λ = (√nₑ + 0.12 + 0.11/√nₑ)·D, nₑ = nm/(n+m) (M. A. Stephens, J. Roy.
 *   Stat. Soc. B 32, 1970; as in W. H. Press et al., "Numerical Recipes",
 *   3rd ed., 2007, §14.3.3). The exact count assumes no ties (continuous
 *   distributions), as is usual.
 */

export interface SampleSummary {
  /** Finite values used. */
  n: number;
  /** Values dropped because they were not finite (failed points). */
  dropped: number;
  mean: number;
  sd: number;
  min: number;
  max: number;
  /** Quantiles at QUANTILE_LEVELS. */
  quantiles: number[];
}

export const QUANTILE_LEVELS = [0.05, 0.25, 0.5, 0.75, 0.95] as const;

/** Finite values, sorted ascending. */
export function finiteSorted(values: ArrayLike<number | null>): Float64Array {
  const out: number[] = [];
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v !== null && Number.isFinite(v)) out.push(v);
  }
  return Float64Array.from(out).sort();
}

/** Quantile `q` (0…1) of sorted values, Hyndman–Fan type 7; NaN for no values. */
export function quantile(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

export function summarizeSample(values: ArrayLike<number | null>): SampleSummary {
  const s = finiteSorted(values);
  let mean = 0;
  let m2 = 0;
  for (let i = 0; i < s.length; i++) {
    const d = s[i] - mean;
    mean += d / (i + 1);
    m2 += d * (s[i] - mean);
  }
  return {
    n: s.length,
    dropped: values.length - s.length,
    mean: s.length ? mean : NaN,
    sd: s.length > 1 ? Math.sqrt(m2 / (s.length - 1)) : NaN,
    min: s.length ? s[0] : NaN,
    max: s.length ? s[s.length - 1] : NaN,
    quantiles: QUANTILE_LEVELS.map((q) => quantile(s, q)),
  };
}

export interface SharedHistogram {
  /** bins + 1 edges, ascending. */
  edges: number[];
  a: number[];
  b: number[];
}

/** Counts of both samples on one set of equal-width bins over their joint range (√n bins, 5…60). */
export function sharedHistogram(a: ArrayLike<number>, b: ArrayLike<number>, bins?: number): SharedHistogram {
  const n = Math.max(a.length, b.length);
  if (n === 0) return { edges: [], a: [], b: [] };
  let lo = Infinity;
  let hi = -Infinity;
  for (const xs of [a, b])
    for (let i = 0; i < xs.length; i++) {
      if (xs[i] < lo) lo = xs[i];
      if (xs[i] > hi) hi = xs[i];
    }
  const k = bins ?? Math.min(60, Math.max(5, Math.round(Math.sqrt(n))));
  if (hi === lo) {
    const w = Math.abs(lo) * 1e-6 || 1e-12;
    lo -= w;
    hi += w;
  }
  const width = (hi - lo) / k;
  const edges = Array.from({ length: k + 1 }, (_, i) => (i === k ? hi : lo + i * width));
  const count = (xs: ArrayLike<number>) => {
    const c = new Array<number>(k).fill(0);
    for (let i = 0; i < xs.length; i++) c[Math.min(k - 1, Math.floor((xs[i] - lo) / width))]++;
    return c;
  };
  return { edges, a: count(a), b: count(b) };
}

export interface KsResult {
  /** D = sup |F_a − F_b|. */
  statistic: number;
  pValue: number;
  method: "exact" | "asymptotic";
  n: number;
  m: number;
}

/** Largest n·m for which the exact p-value is computed (O(n·m) time, O(m) memory). */
export const EXACT_LIMIT = 1_000_000;

/**
 * Two-sample Kolmogorov–Smirnov test, two-sided, of sorted finite samples
 * (see the module's methods). Null when either sample is empty.
 */
export function ksTwoSample(a: Float64Array, b: Float64Array): KsResult | null {
  const n = a.length;
  const m = b.length;
  if (n === 0 || m === 0) return null;
  // D·n·m as an integer: the largest |i·m − j·n| over the merged order, counted after each distinct value.
  let i = 0;
  let j = 0;
  let dnm = 0;
  while (i < n || j < m) {
    const v = i < n && (j >= m || a[i] <= b[j]) ? a[i] : b[j];
    while (i < n && a[i] === v) i++;
    while (j < m && b[j] === v) j++;
    dnm = Math.max(dnm, Math.abs(i * m - j * n));
  }
  const statistic = dnm / (n * m);
  if (n * m <= EXACT_LIMIT) return { statistic, pValue: exactP(n, m, dnm), method: "exact", n, m };
  return { statistic, pValue: kolmogorovQ(lambdaOf(n, m, statistic)), method: "asymptotic", n, m };
}

/**
 * P(D ≥ d) under the null hypothesis, d = dnm/(n·m): one minus the probability
 * that a random path from (0,0) to (n,m), each step right (a value of the
 * first sample) or up, keeps |i·m − j·n| < dnm at every lattice point.
 */
export function exactP(n: number, m: number, dnm: number): number {
  if (dnm <= 0) return 1;
  // prob[j]: probability of reaching (i, j) without leaving the band; steps chosen with the
  // remaining counts' odds, so the values stay probabilities (no overflow of C(n+m, n)).
  const prob = new Float64Array(m + 1);
  prob[0] = 1;
  for (let j = 1; j <= m; j++) prob[j] = Math.abs(j * n) < dnm ? (prob[j - 1] * (m - j + 1)) / (n + m - j + 1) : 0;
  for (let i = 1; i <= n; i++) {
    // moving right from (i−1, j): probability (n − i + 1)/(n − i + 1 + m − j)
    const inside0 = Math.abs(i * m) < dnm;
    prob[0] = inside0 ? (prob[0] * (n - i + 1)) / (n - i + 1 + m) : 0;
    for (let j = 1; j <= m; j++) {
      if (Math.abs(i * m - j * n) >= dnm) {
        prob[j] = 0;
        continue;
      }
      const right = (prob[j] * (n - i + 1)) / (n - i + 1 + m - j);
      const up = (prob[j - 1] * (m - j + 1)) / (n - i + m - j + 1);
      prob[j] = right + up;
    }
  }
  return Math.min(1, Math.max(0, 1 - prob[m]));
}

/** Stephens' corrected argument of the Kolmogorov distribution for samples of n and m. */
export function lambdaOf(n: number, m: number, d: number): number {
  const ne = Math.sqrt((n * m) / (n + m));
  return (ne + 0.12 + 0.11 / ne) * d;
}

/** Q_KS(λ) = 2 Σ_{k≥1} (−1)^{k−1} e^{−2k²λ²}, the Kolmogorov distribution's upper tail. */
export function kolmogorovQ(lambda: number): number {
  if (lambda < 1.18) {
    // The alternating series converges slowly for small λ: use the dual (Jacobi theta) form
    // 1 − Q = (√(2π)/λ) Σ_{k≥1} e^{−(2k−1)²π²/(8λ²)}.
    if (lambda <= 0) return 1;
    const y = Math.exp((-Math.PI * Math.PI) / (8 * lambda * lambda));
    let sum = 0;
    for (let k = 1; k <= 8; k++) sum += y ** ((2 * k - 1) ** 2);
    return Math.min(1, Math.max(0, 1 - (Math.sqrt(2 * Math.PI) / lambda) * sum));
  }
  let sum = 0;
  for (let k = 1; k <= 100; k++) {
    const term = Math.exp(-2 * k * k * lambda * lambda);
    sum += k % 2 ? term : -term;
    if (term < 1e-17) break;
  }
  return Math.min(1, Math.max(0, 2 * sum));
}
