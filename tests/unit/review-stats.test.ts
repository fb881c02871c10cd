/**
 * Statistics of the Monte Carlo comparison (app/lib/review/stats.ts) against
 * values outside the project:
 * - two-sample Kolmogorov–Smirnov statistic and p-value: SciPy 1.17.1,
 *   `scipy.stats.ks_2samp(a, b, method="exact")` (P. Virtanen et al., "SciPy 1.0:
 *   fundamental algorithms for scientific computing in Python", Nature Methods 17,
 *   2020), run on the same deterministic samples (generator below, written
 *   identically in Python); values copied from its output;
 * - the Kolmogorov distribution's upper tail Q(λ): SciPy's `kstwobign.sf`, and the
 *   familiar critical values Q(1.36) ≈ 0.05, Q(1.63) ≈ 0.01 of Smirnov's table
 *   (N. Smirnov, Ann. Math. Stat. 19, 1948) [common practice];
 * - mean, sample standard deviation and quantiles: math.js `mean`, `std`
 *   ("unbiased", divisor n − 1) and `quantileSeq` (linear interpolation, the
 *   Hyndman–Fan type 7 definition).
 */
import { describe, expect, it } from "vitest";
import { mean, quantileSeq, std } from "mathjs";
import {
  EXACT_LIMIT,
  exactP,
  finiteSorted,
  kolmogorovQ,
  ksTwoSample,
  sharedHistogram,
  summarizeSample,
} from "@/app/lib/review/stats";

/** Deterministic samples without ties (the same formula produced the SciPy values). */
const sample = (n: number, shift: number, scale: number, k: number) =>
  Array.from({ length: n }, (_, i) => shift + scale * Math.sin(1.7 * i + k) ** 3 + (i % 7) * 1e-3 * scale);

describe("two-sample Kolmogorov–Smirnov test", () => {
  // [n, m, shift of b, scale of b, phase of b, D (SciPy), p (SciPy, exact)]
  const cases: [number, number, number, number, number, number, number][] = [
    [8, 7, 0, 1, 1, 0.2857142857142857, 0.8466200466200466],
    [20, 25, 0.4, 1, 3, 0.42, 0.029080084528345252],
    [200, 200, 0.15, 1.1, 5, 0.28, 2.6127403909667314e-7],
    [200, 150, 0, 1, 9, 0.03166666666666667, 0.9999830549176175],
  ];
  for (const [n, m, shift, scale, k, d, p] of cases) {
    it(`n=${n}, m=${m}: D and the exact p-value as SciPy's ks_2samp`, () => {
      const r = ksTwoSample(finiteSorted(sample(n, 0, 1, 0)), finiteSorted(sample(m, shift, scale, k)))!;
      expect(r.method).toBe("exact");
      expect(r.statistic).toBeCloseTo(d, 12);
      expect(Math.abs(r.pValue - p)).toBeLessThanOrEqual(1e-9 * Math.max(p, 1e-6));
    });
  }

  it("large samples take the asymptotic distribution (SciPy's exact p = 1.04e-21 for this pair)", () => {
    const a = finiteSorted(sample(1500, 0, 1, 0));
    const b = finiteSorted(sample(1200, 0.05, 1, 2));
    expect(a.length * b.length).toBeGreaterThan(EXACT_LIMIT);
    const r = ksTwoSample(a, b)!;
    expect(r.method).toBe("asymptotic");
    expect(r.statistic).toBeCloseTo(0.19066666666666665, 12);
    // Stephens' corrected asymptotic form is within a small factor of the exact tail this far out.
    expect(Math.log10(r.pValue)).toBeGreaterThan(Math.log10(1.0406788627966468e-21) - 0.3);
    expect(Math.log10(r.pValue)).toBeLessThan(Math.log10(1.0406788627966468e-21) + 0.3);
  });

  it("Q(λ) matches SciPy's kstwobign.sf and Smirnov's critical values", () => {
    expect(kolmogorovQ(1.0)).toBeCloseTo(0.26999967, 7);
    expect(kolmogorovQ(1.36)).toBeCloseTo(0.04948588, 7);
    expect(kolmogorovQ(1.63)).toBeCloseTo(0.00984636, 7);
    expect(kolmogorovQ(0.5)).toBeCloseTo(0.96394524, 7);
    expect(kolmogorovQ(0)).toBe(1);
  });

  it("the exact p-value equals a count of every arrangement for tiny samples (enumeration)", () => {
    // n = 3, m = 3: every one of C(6,3) = 20 orders of the pooled sample is equally likely.
    const n = 3;
    const m = 3;
    const orders: number[][] = [];
    for (let mask = 0; mask < 64; mask++)
      if (popcount(mask) === n) orders.push([...Array(6)].map((_, i) => (mask >> i) & 1));
    const dnmOf = (o: number[]) => {
      let i = 0;
      let j = 0;
      let best = 0;
      for (const x of o) {
        if (x) i++;
        else j++;
        best = Math.max(best, Math.abs(i * m - j * n));
      }
      return best;
    };
    for (const dnm of [3, 6, 9]) {
      const count = orders.filter((o) => dnmOf(o) >= dnm).length;
      expect(exactP(n, m, dnm)).toBeCloseTo(count / orders.length, 12);
    }
  });

  it("identical samples give D = 0 and p = 1; an empty sample gives no test", () => {
    const a = finiteSorted(sample(50, 0, 1, 0));
    expect(ksTwoSample(a, a)).toMatchObject({ statistic: 0, pValue: 1 });
    expect(ksTwoSample(a, new Float64Array())).toBeNull();
  });
});

function popcount(x: number): number {
  let c = 0;
  for (; x; x >>= 1) c += x & 1;
  return c;
}

describe("sample summaries", () => {
  it("mean, σ and quantiles agree with math.js; non-finite values are dropped and counted", () => {
    const xs = sample(137, 2, 0.3, 4);
    const s = summarizeSample([...xs, NaN, null, Infinity]);
    expect(s.n).toBe(137);
    expect(s.dropped).toBe(3);
    expect(s.mean).toBeCloseTo(mean(xs) as number, 12);
    expect(s.sd).toBeCloseTo(std(xs, "unbiased") as unknown as number, 12);
    const q = quantileSeq(xs, [0.05, 0.25, 0.5, 0.75, 0.95]) as number[];
    s.quantiles.forEach((v, i) => expect(v).toBeCloseTo(q[i], 12));
    expect(s.min).toBe(Math.min(...xs));
    expect(s.max).toBe(Math.max(...xs));
  });

  it("histograms of both samples share their bins and count every value", () => {
    const a = finiteSorted(sample(200, 0, 1, 0));
    const b = finiteSorted(sample(150, 0.5, 1, 1));
    const h = sharedHistogram(a, b);
    expect(h.edges.length).toBe(h.a.length + 1);
    expect(h.a.reduce((x, y) => x + y, 0)).toBe(200);
    expect(h.b.reduce((x, y) => x + y, 0)).toBe(150);
    expect(h.edges[0]).toBe(Math.min(a[0], b[0]));
    expect(h.edges[h.edges.length - 1]).toBe(Math.max(a[a.length - 1], b[b.length - 1]));
  });
});
