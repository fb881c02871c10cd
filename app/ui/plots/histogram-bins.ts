/** Bin edges and counts: Freedman–Diaconis width (Freedman & Diaconis 1981), between 5 and 60 bins. */
export function histogramBins(values: number[]): { edges: number[]; counts: number[] } {
  const v = values.filter(Number.isFinite).sort((a, b) => a - b);
  if (v.length === 0) return { edges: [], counts: [] };
  const q = (p: number) => v[Math.min(v.length - 1, Math.floor(p * (v.length - 1)))];
  const lo = v[0];
  const hi = v[v.length - 1];
  if (hi === lo) return { edges: [lo, lo], counts: [v.length] };
  const iqr = q(0.75) - q(0.25);
  const width = iqr > 0 ? (2 * iqr) / Math.cbrt(v.length) : (hi - lo) / 10;
  const n = Math.max(5, Math.min(60, Math.ceil((hi - lo) / width)));
  const step = (hi - lo) / n;
  const counts = new Array<number>(n).fill(0);
  for (const x of v) counts[Math.min(n - 1, Math.floor((x - lo) / step))]++;
  return { edges: Array.from({ length: n + 1 }, (_, i) => lo + i * step), counts };
}
