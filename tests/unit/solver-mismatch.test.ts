/**
 * Mismatch Monte Carlo against Pelgrom's law (M. J. M. Pelgrom, A. C. J.
 * Duinmaijer, A. P. G. Welbers, "Matching properties of MOS transistors",
 * IEEE JSSC 24(5), 1433–1439, 1989 [confirmed]; docs/physics.md §7 Mismatch): with
 * σ(dVT) = avt/√(WL) per device, a saturated weak-inversion device has
 * ln I shifted by −κ·dVT/U_T, so σ(ln I) = κ·σ(VT)/U_T (lognormal current).
 * Statistical tolerances: the sample standard deviation of N normal values
 * has relative standard error 1/√(2(N−1)), the mean σ/√N (common practice);
 * checks use 4 standard errors with a fixed seed, so they are deterministic.
 */
import { describe, expect, it } from "vitest";
import { thermalVoltage } from "../../src/lang/point";
import { NetworkText } from "../helpers/network-text";
import { MismatchSampler, summarize } from "../../src/solver/mismatch";
import { solveNetwork } from "../../src/solver/sweep";

const T = 300.15;

function single(runs: number, seed: number, avt: number, w = 2e-6, l = 2e-6) {
  return new NetworkText("one")
    .set({ temp: T })
    .rail("gnd", 0)
    .rail("vg", 0.5)
    .rail("vd", 1)
    .nfet("m", { gate: "vg", source: "gnd", drain: "vd", w, l })
    .probe("lnI", "log(current(m) / 1A)")
    .mismatch(runs, seed, avt)
    .build();
}

describe("Pelgrom mismatch", () => {
  it("σ(ln I) of a saturated device is κ·σ(VT)/U_T: avt 5 mV·µm, W = L = 2 µm → σ(VT) 2.5 mV, σ(ln I) = 0.0677 (docs/physics.md §7 Mismatch)", () => {
    const N = 4000;
    const net = single(N, 12345, 5e-3);
    const run = solveNetwork(net);
    expect(run.ok).toBe(true);
    expect(run.points.length).toBe(N);
    expect(run.points.map((p) => p.sample)).toEqual(Array.from({ length: N }, (_, k) => k));
    const lnI = run.points.map((p) => Math.log(p.currents[0]));
    const st = summarize(lnI);
    const sigma = (0.7 * 2.5e-3) / thermalVoltage(T);
    expect(sigma).toBeCloseTo(0.0677, 4);
    expect(Math.abs(st.std / sigma - 1)).toBeLessThan(4 / Math.sqrt(2 * (N - 1)));
    // The mean of ln I is the nominal one (the offsets have zero mean).
    const nominal = Math.log(
      1e-15 * Math.exp((0.7 * 0.5) / thermalVoltage(T)) * (1 - Math.exp(-1 / thermalVoltage(T))),
    );
    expect(Math.abs(st.mean - nominal)).toBeLessThan((4 * sigma) / Math.sqrt(N));
    // The run's probe summary is the same statistic.
    expect(run.summaries.length).toBe(1);
    expect(run.summaries[0].probe).toBe("lnI");
    expect(run.summaries[0].std).toBeCloseTo(st.std, 12);
    expect(run.summaries[0].samples).toBe(N);
  });

  it("at WL = 1 µm² the same avt gives twice the spread (area law)", () => {
    const N = 4000;
    const run = solveNetwork(single(N, 777, 5e-3, 1e-6, 1e-6));
    const st = summarize(run.points.map((p) => Math.log(p.currents[0])));
    const sigma = (0.7 * 5e-3) / thermalVoltage(T);
    expect(Math.abs(st.std / sigma - 1)).toBeLessThan(4 / Math.sqrt(2 * (N - 1)));
  });

  it("a pair's ratio spreads by σ(ln I1/I2) = √2·κ·σ(VT)/U_T (independent devices)", () => {
    const N = 3000;
    const net = new NetworkText("pair")
      .set({ temp: T })
      .rail("vdd", 1.8)
      .rail("gnd", 0)
      .rail("vg", 0.6)
      .nfet("m1", { gate: "vg", source: "tail", drain: "vdd", w: 2e-6, l: 2e-6 })
      .nfet("m2", { gate: "vg", source: "tail", drain: "vdd", w: 2e-6, l: 2e-6 })
      .inject("ib", { from: "tail", to: "gnd", value: 1e-9 })
      .mismatch(N, 99, 5e-3)
      .build();
    const run = solveNetwork(net);
    expect(run.ok).toBe(true);
    const st = summarize(run.points.map((p) => Math.log(p.currents[0] / p.currents[1])));
    const sigma = (Math.SQRT2 * 0.7 * 2.5e-3) / thermalVoltage(T);
    expect(Math.abs(st.std / sigma - 1)).toBeLessThan(4 / Math.sqrt(2 * (N - 1)));
  });

  it("same seed, same samples; another seed, other samples; a sample does not depend on the others", () => {
    const a = new MismatchSampler({ runs: 10, seed: 42, avt: 1, span: { from: 0, to: 0 } }, 5);
    const b = new MismatchSampler({ runs: 10, seed: 42, avt: 1, span: { from: 0, to: 0 } }, 5);
    const c = new MismatchSampler({ runs: 10, seed: 43, avt: 1, span: { from: 0, to: 0 } }, 5);
    const s3 = Array.from(a.normals(3));
    b.normals(7);
    expect(Array.from(b.normals(3))).toEqual(s3);
    expect(Array.from(c.normals(3))).not.toEqual(s3);
    expect(Array.from(a.normals(0))).not.toEqual(s3);
    // Runs of a network are reproducible point by point.
    const r1 = solveNetwork(single(20, 5, 3e-3));
    const r2 = solveNetwork(single(20, 5, 3e-3));
    expect(r1.points.map((p) => p.currents[0])).toEqual(r2.points.map((p) => p.currents[0]));
  });

  it("summaries: mean, sample standard deviation and interpolated percentiles", () => {
    const s = summarize([3, 1, 2, 5, 4, NaN]);
    expect(s.n).toBe(5);
    expect(s.mean).toBe(3);
    expect(s.std).toBeCloseTo(Math.sqrt(2.5), 14);
    expect(s.p50).toBe(3);
    expect(s.p5).toBeCloseTo(1.2, 14);
    expect(s.p95).toBeCloseTo(4.8, 14);
    expect([s.min, s.max]).toEqual([1, 5]);
  });
});
