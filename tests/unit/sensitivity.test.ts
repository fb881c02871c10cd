/**
 * Adjoint sensitivities and the first-order mismatch budget (src/solver/sensitivity.ts) against
 * - central finite differences through the whole solve (a general numerical check: five-point
 *   stencil, B. Fornberg, "Generation of finite difference formulas on arbitrarily spaced grids",
 *   Math. Comp. 51, 1988 [memory]),
 * - the differential pair's closed form ∂ln(I1/I2)/∂ΔV = κ/U_T (docs/physics.md §5; C. Mead,
 *   Analog VLSI and Neural Systems, 1989 [confirmed record; formula derived]),
 * - Monte Carlo σ within 3 standard errors (docs/physics.md §7; M. Pelgrom, A. Duinmaijer, A. Welbers,
 *   "Matching properties of MOS transistors", IEEE JSSC 24, 1989). The standard error of a sample
 *   standard deviation of n normal values is σ/√(2(n−1)) (common practice).
 */
import { describe, expect, it } from "vitest";
import type { Network } from "../../src/lang/network";
import { thermalVoltage } from "../../src/lang/point";
import {
  adjointPoint,
  mismatchBudget,
  namePattern,
  paramSensitivities,
  probeSensitivities,
  probeValues,
} from "../../src/solver/sensitivity";
import { solveNetwork } from "../../src/solver/sweep";
import { NetworkText } from "../helpers/network-text";

const T = 300.15;

/** Deterministic uniform numbers (mulberry32; common practice for reproducible tests). */
function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A copy of net with device d's width scaled by e^s (everything else shared). */
function withWidth(net: Network, d: number, s: number): Network {
  const w = Float64Array.from(net.devices.w);
  w[d] *= Math.exp(s);
  return { ...net, devices: { ...net.devices, w } };
}

/** Five-point central difference of f at 0 with step h (error O(h⁴)). */
function fd5(f: (x: number) => number, h: number): number {
  return (-f(2 * h) + 8 * f(h) - 8 * f(-h) + f(-2 * h)) / (12 * h);
}

function probeAt(net: Network, name: string, dvt: Float64Array | null = null): number {
  return probeValues(net, dvt)[name];
}

/** Every probe's W/L and VT derivative against finite differences through the solve. */
function checkAgainstFd(net: Network, devicesToCheck: number[]): number {
  const r = adjointPoint(net);
  if (!r.ok) throw new Error(r.message);
  const sens = probeSensitivities(r.point);
  r.point.release();
  const m = net.devices.count;
  let worst = 0;
  for (const s of sens) {
    const fdSize = new Float64Array(m);
    const fdVt = new Float64Array(m);
    for (const d of devicesToCheck) {
      fdSize[d] = fd5((x) => probeAt(withWidth(net, d, x), s.probe), 1e-3);
      fdVt[d] = fd5((x) => {
        const dvt = new Float64Array(m);
        dvt[d] = x;
        return probeAt(net, s.probe, dvt);
      }, 1e-4);
    }
    // Relative to each entry, floored at 1e-3 of the probe's largest derivative (entries near zero have no relative error).
    const scaleSize = Math.max(...devicesToCheck.map((d) => Math.abs(fdSize[d])));
    const scaleVt = Math.max(...devicesToCheck.map((d) => Math.abs(fdVt[d])));
    for (const d of devicesToCheck) {
      worst = Math.max(
        worst,
        Math.abs(s.dLnSize[d] - fdSize[d]) / Math.max(Math.abs(fdSize[d]), 1e-3 * scaleSize),
        Math.abs(s.dVt[d] - fdVt[d]) / Math.max(Math.abs(fdVt[d]), 1e-3 * scaleVt),
      );
    }
  }
  return worst;
}

/** A random connected n-channel (or p-channel) network in the linear class: gates and bulks on rails. */
function randomLinear(seed: number, pfet: boolean): Network {
  const u = rng(seed);
  const b = new NetworkText(`random${seed}`).set({ temp: T });
  const gates = ["ga", "gb", "gc"];
  b.rail("hi", 1.8).rail("lo", 0);
  gates.forEach((g, i) => b.rail(g, pfet ? 1.8 - (0.45 + 0.1 * i) : 0.45 + 0.1 * i));
  const n = 6 + Math.floor(u() * 6);
  const fet = (name: string, gate: string, s: string, d: string) => {
    const w = `${(0.5 + 3 * u()).toFixed(3)}e-6`;
    if (pfet) b.pfet(name, { gate, source: s, drain: d, well: "hi", w, l: "1e-6" });
    else b.nfet(name, { gate, source: s, drain: d, w, l: "1e-6" });
  };
  let k = 0;
  const pick = () => gates[Math.floor(u() * gates.length)];
  // A spanning tree, some extra edges (cycles), a path to the far rail at a few nodes, an output at each.
  for (let i = 1; i < n; i++) fet(`t${k++}`, pick(), `x${Math.floor(u() * i)}`, `x${i}`);
  for (let e = 0; e < n / 2; e++) {
    const a = Math.floor(u() * n);
    const c = (a + 1 + Math.floor(u() * (n - 1))) % n;
    fet(`e${k++}`, pick(), `x${a}`, `x${c}`);
  }
  for (let i = 0; i < n; i++) fet(`o${i}`, pick(), `x${i}`, pfet ? "lo" : "hi");
  fet(`r0`, pick(), pfet ? "hi" : "lo", `x0`);
  b.inject("iin", pfet ? { from: "lo", to: `x${n - 1}`, value: 30e-9 } : { from: `x${n - 1}`, to: "lo", value: 30e-9 });
  b.probe("i0", "current(o0)");
  b.probe("ratio", `current(o1) / current(o${n - 1})`);
  b.probe("lnr", `log(current(o2) / current(o0))`);
  b.probe("v", `voltage(x${n - 2})`);
  b.probe("supply", pfet ? "current(hi)" : "current(lo)");
  return b.build();
}

describe("adjoint sensitivities against central finite differences (relative ≤ 1e-6)", () => {
  it.each([
    [1, false],
    [2, false],
    [3, false],
    [4, false],
    [5, false],
    [11, true],
    [12, true],
  ])("random linear-class network %i (p-channel: %s)", (seed, pfet) => {
    const net = randomLinear(seed, pfet);
    const r = adjointPoint(net);
    expect(r.ok && r.point.method).toBe("linear");
    if (r.ok) r.point.release();
    expect(
      checkAgainstFd(
        net,
        Array.from({ length: net.devices.count }, (_, d) => d),
      ),
    ).toBeLessThan(1e-6);
  });

  it.each(["weak", "ekv"] as const)(
    "a current mirror (Newton class, %s model) through the transposed Jacobian",
    (model) => {
      const b = new NetworkText("mirror").set(
        model === "ekv" ? { temp: T, model, vt0: 0.4, ispec: 1e-7 } : { temp: T },
      );
      b.rail("vdd", 1.8)
        .rail("gnd", 0)
        .rail("vc", 0.9)
        .inject("iref", { from: "vdd", to: "a", value: 20e-9 })
        .nfet("m1", { gate: "a", source: "gnd", drain: "a", w: "2e-6", l: "1e-6" })
        .nfet("m2", { gate: "a", source: "gnd", drain: "o", w: "3e-6", l: "1e-6" })
        .nfet("mc", { gate: "vc", source: "o", drain: "vdd", w: "1e-6", l: "1e-6" })
        .probe("iout", "current(m2)")
        .probe("gain", "current(m2) / current(iref)")
        .probe("vo", "voltage(o)")
        .probe("vdd_i", "current(vdd)");
      const net = b.build();
      const r = adjointPoint(net);
      expect(r.ok && r.point.method).toBe("newton");
      if (r.ok) r.point.release();
      expect(checkAgainstFd(net, [0, 1, 2])).toBeLessThan(1e-6);
    },
  );
});

function pair(avt: number | null): Network {
  const b = new NetworkText("pair")
    .set({ temp: T })
    .param("dv", 0.01)
    .rail("vdd", 1.8)
    .rail("gnd", 0)
    .rail("v1", "0.7 + dv")
    .rail("v2", 0.7)
    .nfet("m1", { gate: "v1", source: "tail", drain: "vdd", w: "1e-6", l: "1e-6" })
    .nfet("m2", { gate: "v2", source: "tail", drain: "vdd", w: "1e-6", l: "1e-6" })
    .inject("ib", { from: "tail", to: "gnd", value: 100e-9 })
    .probe("lnratio", "log(current(m1) / current(m2))")
    .probe("i1", "current(m1)");
  if (avt !== null) b.mismatch(4000, 7, avt);
  return b.build();
}

describe("the differential pair's closed form (docs/physics.md §5; Mead 1989)", () => {
  it("∂ln(I1/I2)/∂ΔV = κ/U_T through the param, and ∓κ/U_T per threshold; ∂ln(I1/I2)/∂ln(W/L)₁ = 1", () => {
    const net = pair(null);
    const kut = 0.7 / thermalVoltage(T);
    const [dv] = paramSensitivities(net);
    expect(dv.param).toBe("dv");
    expect(Math.abs(dv.probes.lnratio / kut - 1)).toBeLessThan(1e-6);
    const r = adjointPoint(net);
    if (!r.ok) throw new Error(r.message);
    const [s] = probeSensitivities(r.point, ["lnratio"]);
    r.point.release();
    expect(Math.abs(s.dVt[0] / -kut - 1)).toBeLessThan(1e-9);
    expect(Math.abs(s.dVt[1] / kut - 1)).toBeLessThan(1e-9);
    expect(Math.abs(s.dLnSize[0] - 1)).toBeLessThan(1e-9);
    expect(Math.abs(s.dLnSize[1] + 1)).toBeLessThan(1e-9);
  });
});

/** Sample standard deviation of the probe over a Monte Carlo run, and its standard error σ/√(2(n−1)). */
function monteCarlo(net: Network, probe: string): { sigma: number; se: number } {
  const run = solveNetwork(net);
  const v = run.points.filter((p) => p.ok).map((p) => p.probes[probe]);
  expect(v.length).toBe(net.mismatch?.runs);
  const mean = v.reduce((a, b) => a + b, 0) / v.length;
  const sigma = Math.sqrt(v.reduce((a, b) => a + (b - mean) ** 2, 0) / (v.length - 1));
  return { sigma, se: sigma / Math.sqrt(2 * (v.length - 1)) };
}

describe("first-order mismatch σ against Monte Carlo (docs/physics.md §7; Pelgrom 1989)", () => {
  it("pair: σ(ln I1/I2) = κ·√2·avt/(U_T·√(WL)), and Monte Carlo within 3 standard errors", () => {
    const avt = 3e-3;
    const net = pair(avt);
    const r = adjointPoint(net);
    if (!r.ok) throw new Error(r.message);
    const [s] = probeSensitivities(r.point, ["lnratio"]);
    r.point.release();
    const b = mismatchBudget(net, s, avt, { groups: ["m*"] });
    const closed = (0.7 / thermalVoltage(T)) * Math.SQRT2 * avt;
    expect(Math.abs(b.sigma / closed - 1)).toBeLessThan(1e-9);
    expect(b.devices.map((d) => d.name).sort()).toEqual(["m1", "m2"]);
    expect(b.devices[0].share).toBeCloseTo(0.5, 9);
    expect(b.groups).toEqual([{ name: "m*", devices: 2, variance: b.sigma ** 2, share: 1 }]);
    const mc = monteCarlo(net, "lnratio");
    expect(Math.abs(mc.sigma - b.sigma)).toBeLessThan(3 * mc.se);
  });

  it("a chain's output (docs/physics.md §6): first-order σ within 3 standard errors of Monte Carlo; the nearest devices lead", () => {
    const avt = 2e-3;
    const N = 15;
    const b = new NetworkText("chain").set({ temp: T }).rail("vh", 0.75).rail("vv", 0.6).rail("vd", 1.8).rail("gnd", 0);
    for (let k = 0; k < N; k++) b.nfet(`out${k}`, { gate: "vv", source: `n${k}`, drain: "vd", w: "2e-6", l: "1e-6" });
    for (let k = 0; k + 1 < N; k++)
      b.nfet(`lat${k}`, { gate: "vh", source: `n${k}`, drain: `n${k + 1}`, w: "1e-6", l: "1e-6" });
    b.inject("iin", { from: "n7", to: "gnd", value: 10e-9 });
    b.probe("r", "current(out4) / current(iin)");
    b.mismatch(3000, 11, avt);
    const net = b.build();
    const r = adjointPoint(net);
    if (!r.ok) throw new Error(r.message);
    const [s] = probeSensitivities(r.point);
    r.point.release();
    const budget = mismatchBudget(net, s, avt, { groups: ["out*", "lat*"], top: 5 });
    expect(budget.devices[0].name).toBe("out4");
    const shares = budget.groups.reduce((a, g) => a + g.share, 0);
    expect(Math.abs(shares - 1)).toBeLessThan(1e-12);
    const mc = monteCarlo(net, "r");
    expect(Math.abs(mc.sigma - budget.sigma)).toBeLessThan(3 * mc.se);
  });

  it("name patterns: * is any run of characters, everything else literal", () => {
    expect(namePattern("lat*").test("lat12")).toBe(true);
    expect(namePattern("lat*").test("xlat1")).toBe(false);
    expect(namePattern("m.1").test("mx1")).toBe(false);
    expect(namePattern("*_o").test("a_b_o")).toBe(true);
  });
});
