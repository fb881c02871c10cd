/**
 * Expectations: each kind evaluated at hand-computed points against a closed form from outside the project, the
 * Wilson interval against its defining quadratic, and the Monte Carlo yield of a current bound against the
 * lognormal probability that Pelgrom's law gives.
 */
import { erf } from "mathjs";
import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";
import type { Network } from "../../src/lang/network";
import { thermalVoltage } from "../../src/lang/point";
import { ExpectationTally, summarizeExpectations, solveNetwork, wilsonInterval } from "../../src/solver/index";
import { Z95 } from "../../src/solver/expectation-summary";
import { tailPair } from "../helpers/pair-sweep";

function net(text: string): Network {
  const r = elaborate(text);
  expect(r.diagnostics.filter((d) => d.severity === "error")).toEqual([]);
  return r.network!;
}

function summaries(text: string) {
  const n = net(text);
  const run = solveNetwork(n);
  expect(run.ok).toBe(true);
  return { run, byName: Object.fromEntries(summarizeExpectations(n, run).map((s) => [s.name, s])) };
}

const UT = thermalVoltage(300);
const KAPPA = 0.7;

describe("a differential pair's current ratio against Mead 1989", () => {
  // I1/I2 = exp(κ(V1 − V2)/U_T) with both devices saturated and a common source (C. Mead, Analog VLSI and Neural
  // Systems, 1989, the transconductance amplifier [confirmed record; formula derived from the weak-inversion law]).
  const steps = [0, 0.01, 0.02, 0.03, 0.04, 0.05];
  const text = `${tailPair(steps)}expect band = 1.2 <= ratio <= 2.5
expect direct = 1.2 <= current(m1)/current(m2) <= 2.5
`;
  const ratio = (dv: number) => Math.exp((KAPPA * dv) / UT);

  it("passes exactly where the closed form lies in the band, first failure and margin as computed", () => {
    const { byName } = summaries(text);
    const inBand = steps.map((dv) => ratio(dv) >= 1.2 && ratio(dv) <= 2.5);
    expect(inBand).toEqual([false, true, true, true, false, false]); // 1, 1.31, 1.72, 2.25, 2.95, 3.87
    for (const s of [byName.band, byName.direct]) {
      expect(s.passed).toBe(false);
      expect(s.points).toBe(6);
      expect(s.pointsPassed).toBe(3);
      expect(s.firstFailure).toEqual({ point: 0, params: { dv: 0 }, sample: null });
      // The worst point: min over points of min(ratio − 1.2, 2.5 − ratio); at dv = 50 mV, 2.5 − 3.87.
      const margins = steps.map((dv) => Math.min(ratio(dv) - 1.2, 2.5 - ratio(dv)));
      expect(s.margin!).toBeCloseTo(Math.min(...margins), 6);
      expect(s.worstPoint).toBe(5);
      expect(s.unit).toBe("");
      expect(s.yield).toBeNull();
    }
  });

  it("records a verdict and a margin at every point", () => {
    const { run } = summaries(text);
    for (const p of run.points) {
      const r = ratio(p.params.dv);
      expect(p.expectations!.passed[0]).toBe(r >= 1.2 && r <= 2.5 ? 1 : 0);
      expect(p.expectations!.margins[0]).toBeCloseTo(Math.min(r - 1.2, 2.5 - r), 6);
    }
  });
});

describe("conditions: and, or, not, equality", () => {
  const text = (cond: string) => `rail vdd = 1
rail gnd = 0
param a = 3
inject i from=vdd to=gnd value=1n
expect c = ${cond}
`;
  const one = (cond: string) => summaries(text(cond)).byName.c;

  it("and takes the smaller margin, or the larger, not negates", () => {
    expect(one("a > 1 and a < 4")).toMatchObject({ passed: true, margin: 1 }); // min(2, 1)
    expect(one("a > 1 and a < 2")).toMatchObject({ passed: false, margin: -1 });
    expect(one("a < 1 or a < 4")).toMatchObject({ passed: true, margin: 1 }); // max(−2, 1)
    expect(one("not a < 1")).toMatchObject({ passed: true, margin: 2 });
    expect(one("not (a > 1 and a < 4)")).toMatchObject({ passed: false, margin: -1 });
  });

  it("a margin of 0 holds for <= and fails for <", () => {
    expect(one("a <= 3")).toMatchObject({ passed: true, margin: 0 });
    expect(one("a < 3")).toMatchObject({ passed: false, margin: 0 });
    expect(one("a == 3")).toMatchObject({ passed: true });
    expect(one("a != 3")).toMatchObject({ passed: false, margin: 0 });
  });

  it("a condition over amperes and volts has no single margin, only a verdict", () => {
    const s = one("current(i) < 2n and voltage(vdd) > 0.5");
    expect(s.passed).toBe(true);
    expect(s.margin).toBeNull();
    expect(one("current(i) < 2n").unit).toBe("A");
  });
});

describe("saturation at V_DS just above and below 4 U_T", () => {
  // Saturated is V_DS > 4·U_T (docs/language.md); 4·U_T = 103.408 mV at 300 K (SI 2019 k and q, exact).
  const text = (vd: number) => `set temp = 300K
rail g = 0.4
rail s = 0
rail d = ${vd}
nfet m gate=g source=s drain=d
expect sat = saturated devices=m
expect linear = unsaturated devices=m
`;
  it("passes 1 mV above, fails 1 mV below, with the margin V_DS − 4 U_T in volts", () => {
    const above = summaries(text(4 * UT + 1e-3)).byName;
    expect(above.sat).toMatchObject({ passed: true, unit: "V" });
    expect(above.sat.margin!).toBeCloseTo(1e-3, 12);
    expect(above.linear.passed).toBe(false);
    expect(above.linear.margin!).toBeCloseTo(-1e-3, 12);
    const below = summaries(text(4 * UT - 1e-3)).byName;
    expect(below.sat.passed).toBe(false);
    expect(below.sat.margin!).toBeCloseTo(-1e-3, 12);
    expect(below.linear).toMatchObject({ passed: true });
  });

  it("a pfet's V_SD, measured from its drain down to its source", () => {
    const t = (vd: number) => `rail w = 1.8
rail g = 1.4
rail d = ${vd}
pfet p gate=g source=w drain=d well=w
expect sat = saturated devices=p
`;
    expect(summaries(t(1.8 - 4 * UT - 1e-3)).byName.sat.passed).toBe(true);
    expect(summaries(t(1.8 - 4 * UT + 1e-3)).byName.sat.passed).toBe(false);
  });
});

describe("weak inversion below an inversion-coefficient bound", () => {
  // IC = I_F / (ispec · W/L) with I_F = i0 · W/L · exp(κ V_G / U_T) at V_S = 0 (docs/physics.md; EKV: Enz,
  // Krummenacher, Vittoz 1995 [confirmed]). With i0 = 1f, ispec = 100n: IC = 1e-8 · exp(κ V_G / U_T).
  const vgFor = (ic: number) => (UT / KAPPA) * Math.log(ic / 1e-8);
  const text = (vg: number, below = "") => `set i0 = 1f
set ispec = 100n
set vt0 = 450m
rail g = ${vg}
rail s = 0
rail d = 1
nfet m gate=g source=s drain=d
expect weak_ok = weak devices=* ${below}
`;
  it("passes just below IC 0.1, fails just above, margin 0.1 − IC", () => {
    const under = summaries(text(vgFor(0.099))).byName.weak_ok;
    expect(under.passed).toBe(true);
    expect(under.margin!).toBeCloseTo(0.001, 9);
    const over = summaries(text(vgFor(0.101))).byName.weak_ok;
    expect(over.passed).toBe(false);
    expect(over.margin!).toBeCloseTo(-0.001, 9);
  });

  it("takes its bound from below=", () => {
    expect(summaries(text(vgFor(0.02), "below=0.01")).byName.weak_ok).toMatchObject({ passed: false });
    expect(summaries(text(vgFor(0.005), "below=0.01")).byName.weak_ok).toMatchObject({ passed: true });
  });
});

describe("junctions", () => {
  it("a source 0.1 V below the substrate is forward-biased: fails with margin −0.1 V (+ 1 µV tolerance)", () => {
    const t = (vs: number) => `rail g = 0.3
rail s = ${vs}
rail d = 1
nfet m gate=g source=s drain=d
expect junctions = reverse devices=*
`;
    const fwd = summaries(t(-0.1)).byName.junctions;
    expect(fwd.passed).toBe(false);
    expect(fwd.margin!).toBeCloseTo(-0.1 + 1e-6, 12);
    const ok = summaries(t(0)).byName.junctions;
    expect(ok.passed).toBe(true);
    expect(ok.margin!).toBeCloseTo(1e-6, 12);
  });
});

describe("power drawn from the rails", () => {
  // A pair whose tail sinks I_b into ground: the supply delivers I_b at V, ground takes it at 0 V, so the power is
  // V·I_b (Tellegen's theorem; common practice).
  const text = (budget: string) => `rail vdd = 1.2
rail gnd = 0
rail v1 = 0.62
rail v2 = 0.6
nfet m1 gate=v1 source=t drain=vdd
nfet m2 gate=v2 source=t drain=vdd
inject tail from=t to=gnd value=100n
probe p = power()
probe p_vdd = power(vdd)
expect budget = power() <= ${budget}
`;
  it("is V·I_b, in watts, and the margin is the budget minus it", () => {
    const { run, byName } = summaries(text("150n"));
    expect(run.points[0].probes.p).toBeCloseTo(1.2 * 100e-9, 18);
    expect(run.points[0].probes.p_vdd).toBeCloseTo(1.2 * 100e-9, 18);
    expect(byName.budget).toMatchObject({ passed: true, unit: "W" });
    expect(byName.budget.margin!).toBeCloseTo(150e-9 - 120e-9, 18);
    expect(summaries(text("100n")).byName.budget.passed).toBe(false);
  });
});

describe("the Wilson score interval", () => {
  // E. B. Wilson, "Probable inference, the law of succession, and statistical inference", JASA 22, 209–212, 1927
  // [confirmed record]: the interval holds the p with (p̂ − p)² = z²·p(1 − p)/n, the roots of
  // (1 + z²/n)·p² − (2p̂ + z²/n)·p + p̂² = 0, solved here with the quadratic formula.
  const roots = (k: number, n: number) => {
    const z2 = Z95 * Z95;
    const p = k / n;
    const a = 1 + z2 / n;
    const b = -(2 * p + z2 / n);
    const c = p * p;
    const d = Math.sqrt(b * b - 4 * a * c);
    return [(-b - d) / (2 * a), (-b + d) / (2 * a)];
  };
  it.each([
    [0, 10],
    [1, 10],
    [5, 10],
    [10, 10],
    [951, 1000],
    [3, 1_000_000],
  ])("k = %i of n = %i matches the roots of Wilson's quadratic", (k, n) => {
    const { low, high } = wilsonInterval(k, n);
    const [lo, hi] = roots(k, n);
    expect(low).toBeCloseTo(lo, 12);
    expect(high).toBeCloseTo(hi, 12);
    expect(low).toBeLessThanOrEqual(k / n);
    expect(high).toBeGreaterThanOrEqual(k / n);
  });

  it("gives the commonly tabulated 0.2775 upper bound for 0 of 10 [memory]", () => {
    expect(wilsonInterval(0, 10).high).toBeCloseTo(0.2775, 4);
    expect(wilsonInterval(10, 10).low).toBeCloseTo(0.7225, 4);
  });
});

describe("Monte Carlo yield of a single device's current bound against Pelgrom's law", () => {
  // In weak inversion a threshold shift ΔVT scales the current by exp(−κΔVT/U_T), so ln I is normal with
  // σ(ln I) = κ·σ(ΔVT)/U_T and σ(ΔVT) = avt/√(W·L) per device (M. J. M. Pelgrom, A. C. J. Duinmaijer, A. P. G.
  // Welbers, "Matching properties of MOS transistors", IEEE JSSC 24(5), 1989 [confirmed]; docs/physics.md). The
  // probability that I ≤ I_nom·e^t is Φ(t/σ); Φ from math.js's erf.
  const avt = 5e-3;
  const runs = 4000;
  const sigmaVt = avt / Math.sqrt(1 * 1); // W = L = 1 µm
  const sigma = (KAPPA * sigmaVt) / UT;
  const t = 0.05;
  const text = `set temp = 300K
rail g = 0.4
rail s = 0
rail d = 1
nfet m gate=g source=s drain=d
param inom = 1f * exp(0.7 * 0.4 / ut) * (1 - exp(-1 / ut))
mismatch runs ${runs} seed 7 avt ${avt}
expect bound = current(m) <= inom * exp(${t})
`;
  it("the yield matches Φ(t/σ) within 3 binomial standard errors, and its Wilson interval is reported", () => {
    const { byName } = summaries(text);
    const s = byName.bound;
    const phi = 0.5 * (1 + (erf(t / sigma / Math.SQRT2) as number));
    const se = Math.sqrt((phi * (1 - phi)) / runs);
    expect(s.yield!.samples).toBe(runs);
    expect(Math.abs(s.yield!.passed / runs - phi)).toBeLessThan(3 * se);
    expect(s.yield!.low).toBeLessThan(s.yield!.passed / runs);
    expect(s.yield!.high).toBeGreaterThan(s.yield!.passed / runs);
    expect(s.gridYield).toEqual({ passed: [s.yield!.passed], samples: [runs] });
    expect(s.firstFailure!.sample).toBe(s.firstFailure!.point);
  });
});

describe("the tally", () => {
  it("counts yields per grid point, unsolved points as failing, and the earliest failure whatever the order", () => {
    const tally = new ExpectationTally([{ name: "x", line: 3, unit: "A" }], 2, 3);
    const ok = { passed: [1], margins: [0.5] };
    const bad = { passed: [0], margins: [-0.25] };
    tally.add(5, bad, () => ({ g: 2 }));
    tally.add(0, ok, () => ({ g: 0 }));
    tally.add(1, ok, () => ({ g: 0 }));
    tally.add(2, null, () => ({ g: 1 }));
    tally.add(3, ok, () => ({ g: 1 }));
    tally.add(4, ok, () => ({ g: 2 }));
    const [s] = tally.finish();
    expect(s).toMatchObject({
      passed: false,
      points: 6,
      pointsPassed: 4,
      notSolved: 1,
      firstFailure: { point: 2, params: { g: 1 }, sample: 0 },
      margin: -0.25,
      worstPoint: 5,
    });
    expect(s.gridYield).toEqual({ passed: [2, 1, 1], samples: [2, 2, 2] });
    expect(s.yield).toMatchObject({ passed: 4, samples: 6 });
  });
});
