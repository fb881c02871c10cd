/**
 * The solver against published closed forms and the check values of
 * docs/physics.md (section numbers and source marks given per test).
 * Unless stated: T = 300.15 K, κ = 0.7, I0 = 1e-15 A, W/L = 1 (docs/physics.md, Conventions).
 */
import { describe, expect, it } from "vitest";
import { thermalVoltage } from "../../src/lang/point";
import { NetworkText } from "../helpers/network-text";
import { ekvF } from "../../src/solver/ekv";
import type { PointResult, RunResult } from "../../src/solver/results";
import { solveNetwork } from "../../src/solver/sweep";

const T = 300.15;

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

/** |a − printed| within half a unit of the printed value's last digit (a table value's own precision). */
function matchesPrinted(a: number, printed: string): boolean {
  const [mant, exp = "0"] = printed.toLowerCase().split("e");
  const decimals = mant.includes(".") ? mant.split(".")[1].length : 0;
  const halfUlp = 0.5 * 10 ** (Number(exp) - decimals);
  return Math.abs(a - Number(printed)) <= halfUlp * (1 + 1e-9);
}

function only(run: RunResult): PointResult {
  expect(run.failures).toEqual([]);
  expect(run.ok).toBe(true);
  expect(run.points.length).toBe(1);
  return run.points[0];
}

const netOf = new WeakMap<RunResult, ReturnType<NetworkText["build"]>>();

/** Current of the device called `name` at point p of run. */
function dev(run: RunResult, p: PointResult, name: string): number {
  return p.currents[netOf.get(run)!.devices.index.get(name)!];
}
function solve(b: NetworkText, opts: Parameters<typeof solveNetwork>[1] = {}): RunResult {
  const net = b.build();
  const run = solveNetwork(net, opts);
  netOf.set(run, net);
  return run;
}

describe("thermal voltage (docs/physics.md §1 Thermal voltage; BIPM SI Brochure 9th ed. 2019, CODATA 2018 exact k and q [confirmed])", () => {
  it.each([
    [250, 21.543333e-3],
    [300, 25.852e-3],
    [300.15, 25.864926e-3],
    [350, 30.160666e-3],
  ])("U_T(%f K) = %f V, and the solver's settings carry it", (temp, ut) => {
    expect(Math.abs(thermalVoltage(temp) - ut)).toBeLessThan(5e-10);
    const net = new NetworkText().set({ temp }).build();
    expect(Math.abs(net.settings.ut - ut)).toBeLessThan(5e-10);
  });
});

/** Differential pair: both saturated, common source node drawn by a tail sink of Ib. */
function pair(dv: number, ib: number, temp = T): NetworkText {
  return new NetworkText("pair")
    .set({ temp })
    .rail("vdd", 1.8)
    .rail("gnd", 0)
    .rail("v1", 0.7 + dv)
    .rail("v2", 0.7)
    .nfet("m1", { gate: "v1", source: "tail", drain: "vdd" })
    .nfet("m2", { gate: "v2", source: "tail", drain: "vdd" })
    .inject("ib", { from: "tail", to: "gnd", value: ib });
}

describe("differential pair (docs/physics.md §5 Differential pair; C. Mead, Analog VLSI and Neural Systems, 1989 [confirmed record; formula derived])", () => {
  it("ΔV 10 mV, Ib 100 nA: I1 − I2 = Ib·tanh(κΔV/2U_T) = 13.449845 nA, I1/I2 = exp(κΔV/U_T) = 1.3107989, I1 = 56.724922 nA", () => {
    const run = solve(pair(0.01, 100e-9));
    const p = only(run);
    expect(p.solver.method).toBe("linear");
    const i1 = dev(run, p, "m1");
    const i2 = dev(run, p, "m2");
    expect(rel(i1 - i2, 13.449845e-9)).toBeLessThan(1e-7);
    expect(rel(i1 / i2, 1.3107989)).toBeLessThan(1e-7);
    expect(rel(i1, 56.724922e-9)).toBeLessThan(1e-7);
    // The closed forms themselves, to near machine precision.
    const x = (0.7 * 0.01) / thermalVoltage(T);
    expect(rel(i1 / i2, Math.exp(x))).toBeLessThan(1e-12);
    expect(rel(i1 - i2, 100e-9 * Math.tanh(x / 2))).toBeLessThan(1e-12);
    expect(p.saturated[0]).toBe(1);
    expect(p.saturated[1]).toBe(1);
  });

  it("a 90/10 split needs ΔV = U_T·ln9/κ = 81.19 mV", () => {
    const dv = (thermalVoltage(T) * Math.log(9)) / 0.7;
    expect(dv).toBeCloseTo(0.08119, 5);
    const run = solve(pair(dv, 1e-9));
    const p = only(run);
    expect(rel(dev(run, p, "m1") / 1e-9, 0.9)).toBeLessThan(1e-12);
  });
});

/**
 * 1-D diffuser chain (docs/physics.md §6 1-D diffuser chain [derived, checked numerically]).
 * Lateral nfets (gate Vh) between neighbours, an output nfet at every node
 * (gate Vv, drain on a high rail, so saturated: I_k = Gv·u_k with
 * u = exp(−V/U_T)), a sink drawing Iin out of node j.
 * KCL at node k in pseudo-voltages: Gh(u_k − u_{k−1}) + Gh(u_k − u_{k+1}) + Gv·u_k = Iin·δ_kj,
 * i.e. (2 + g)u_k − u_{k−1} − u_{k+1} = (Iin/Gh)δ_kj with g = Gv/Gh = exp(κ(Vv − Vh)/U_T).
 * Away from j, u_k = r^k solves it when r + 1/r = 2 + g: r = e^{−θ}, cosh θ = 1 + g/2.
 * With open ends (no lateral device beyond 0 and N−1) the end equation is
 * (1 + g)u_0 − u_1 = 0, which cosh((k + ½)θ) satisfies since
 * cosh(3θ/2) + cosh(θ/2) = 2cosh θ·cosh(θ/2) = (2 + g)cosh(θ/2). So on each side of j
 * u_k ∝ cosh((min(k,j) + ½)θ)·cosh((N − max(k,j) − ½)θ) = w_k, continuous at j,
 * and since Σ_k Gv·u_k = Iin (every output current comes from the sink's node), I_k/Iin = w_k/Σw.
 */
function chain(N: number, j: number, vh: number, vv: number, iin: number, temp = T): NetworkText {
  const b = new NetworkText("chain").set({ temp }).rail("vh", vh).rail("vv", vv).rail("vd", 1.8).rail("gnd", 0);
  for (let k = 0; k < N; k++) b.nfet(`out${k}`, { gate: "vv", source: `n${k}`, drain: "vd" });
  for (let k = 0; k + 1 < N; k++) b.nfet(`lat${k}`, { gate: "vh", source: `n${k}`, drain: `n${k + 1}` });
  b.inject("iin", { from: `n${j}`, to: "gnd", value: iin });
  return b;
}

function chainClosedForm(N: number, j: number, g: number): number[] {
  const theta = Math.acosh(1 + g / 2);
  const w = Array.from(
    { length: N },
    (_, k) => Math.cosh((Math.min(k, j) + 0.5) * theta) * Math.cosh((N - Math.max(k, j) - 0.5) * theta),
  );
  const sum = w.reduce((a, b) => a + b, 0);
  return w.map((x) => x / sum);
}

describe("1-D diffuser chain against its closed form (docs/physics.md §6 1-D diffuser chain [derived])", () => {
  it.each([
    [0.1, "0.066778927", "0.772825108", "3.880443", "0.128142867", "9.738827e-3", "5.759987e-7"],
    [0.25, "1.15238764e-3", "0.966624469", "29.459241", "0.018108846", "1.3290117e-2", "6.318849e-3"],
  ])("Vh − Vv = %f V: g, r, space constant, I_50, I_40, I_0 of the table", (dvh, g, r, lambda, i50, i40, i0) => {
    const ut = thermalVoltage(T);
    const gc = Math.exp((-0.7 * dvh) / ut);
    expect(matchesPrinted(gc, g)).toBe(true);
    const theta = Math.acosh(1 + gc / 2);
    expect(matchesPrinted(Math.exp(-theta), r)).toBe(true);
    expect(matchesPrinted(1 / theta, lambda)).toBe(true);
    const iin = 1e-9;
    const run = solve(chain(101, 50, 0.5 + dvh, 0.5, iin));
    const p = only(run);
    expect(p.solver.method).toBe("linear");
    const out = (k: number) => dev(run, p, `out${k}`) / iin;
    expect(matchesPrinted(out(50), i50)).toBe(true);
    expect(matchesPrinted(out(40), i40)).toBe(true);
    expect(matchesPrinted(out(0), i0)).toBe(true);
    // Every node against the closed form, and the outputs sum to Iin.
    const cf = chainClosedForm(101, 50, gc);
    let sum = 0;
    for (let k = 0; k < 101; k++) {
      expect(rel(out(k), cf[k])).toBeLessThan(1e-11);
      sum += out(k);
    }
    expect(rel(sum, 1)).toBeLessThan(1e-12);
  });
});

describe("two-node diffuser (Vittoz & Arreguit, Electronics Letters 29(3), 1993 [memory]; docs/physics.md §3 Pseudo-voltages)", () => {
  it("the lateral current is (lateral weight / output weight) × the difference of the output currents", () => {
    // Weights G = (W/L)·exp(κVg/U_T): output devices W/L = 3, lateral W/L = 1/2.
    const b = new NetworkText("two")
      .set({ temp: T })
      .rail("vh", 0.62)
      .rail("vv", 0.55)
      .rail("vd", 1.5)
      .rail("gnd", 0)
      .nfet("oa", { gate: "vv", source: "a", drain: "vd", w: 3e-6 })
      .nfet("ob", { gate: "vv", source: "b", drain: "vd", w: 3e-6 })
      .nfet("lat", { gate: "vh", source: "a", drain: "b", l: 2e-6 })
      .inject("iin", { from: "a", to: "gnd", value: 2e-9 });
    const run = solve(b);
    const p = only(run);
    const ut = thermalVoltage(T);
    const wl = (0.5 * Math.exp((0.7 * 0.62) / ut)) / (3 * Math.exp((0.7 * 0.55) / ut));
    const ia = dev(run, p, "oa");
    const ib = dev(run, p, "ob");
    // lat has source a, drain b: I(d→s) = G(u_a − u_b) flows from b to a.
    expect(rel(dev(run, p, "lat"), wl * (ia - ib))).toBeLessThan(1e-11);
    expect(rel(ia + ib, 2e-9)).toBeLessThan(1e-12);
  });
});

/** Mirror: diode-connected m1 (gate = drain = x) fed Iin, m2 (gate x) into Vout. */
function mirror(vout: number, ratio = 4): NetworkText {
  return new NetworkText("mirror")
    .set({ temp: T })
    .rail("gnd", 0)
    .rail("vout", vout)
    .inject("iin", { from: "gnd", to: "x", value: 10e-9 })
    .nfet("m1", { gate: "x", source: "gnd", drain: "x" })
    .nfet("m2", { gate: "x", source: "gnd", drain: "vout", w: ratio * 1e-6 });
}

describe("weak-inversion mirror (docs/physics.md §8 Current mirror; Mead 1989, current mirror [confirmed record; formula derived])", () => {
  it("Iin 10 nA, W/L 1:4: Vx = 0.5955619 V, Iout/Iin = 4.0000000 at Vout 1 V, solved by Newton with the reason", () => {
    const run = solve(mirror(1.0));
    const p = only(run);
    expect(p.solver.method).toBe("newton");
    expect(run.reason).toBe("gate of m1 is on internal node x");
    const x = netOf.get(run)!.nodes.index.get("x")!;
    expect(Math.abs(p.voltages[x] - 0.5955619)).toBeLessThan(5e-8);
    expect(Math.abs(dev(run, p, "m2") / 10e-9 - 4)).toBeLessThan(5e-8);
    expect(p.solver.residual).toBeLessThan(1e-18);
  });

  it("Iout/Iin = 3.4212157 at Vout 0.05 V (output out of saturation)", () => {
    const run = solve(mirror(0.05));
    const p = only(run);
    expect(Math.abs(dev(run, p, "m2") / 10e-9 - 3.4212157)).toBeLessThan(5e-8);
    expect(p.saturated[1]).toBe(0);
    // The closed form [(W/L)2/(W/L)1]·(1 − e^{−Vout/U_T})/(1 − e^{−Vx/U_T}) at the solved Vx.
    const ut = thermalVoltage(T);
    const vx = p.voltages[netOf.get(run)!.nodes.index.get("x")!];
    expect(rel(dev(run, p, "m2") / 10e-9, (4 * (1 - Math.exp(-0.05 / ut))) / (1 - Math.exp(-vx / ut)))).toBeLessThan(
      1e-9,
    );
  });

  it("the continuation path (source stepping) reaches the same operating point", () => {
    const run = solve(mirror(1.0), { forceContinuation: true });
    const p = only(run);
    expect(p.solver.continuation).toBe(true);
    expect(Math.abs(dev(run, p, "m2") / 10e-9 - 4)).toBeLessThan(5e-8);
  });
});

describe("EKV all-region model (docs/physics.md §4; Enz, Krummenacher, Vittoz, Analog Integrated Circuits and Signal Processing 8(1), 1995 [confirmed])", () => {
  it("F(0) = ln²2 = 0.480453 and F(20) = 100.0009", () => {
    expect(ekvF(0)).toBeCloseTo(0.480453, 6);
    expect(ekvF(20)).toBeCloseTo(100.0009, 4);
  });

  it.each([
    [1e-4, 1.0101],
    [1e-3, 1.0322],
    [1e-2, 1.1061],
    [0.1, 1.383],
  ])("at IC = %f the pure exponential overestimates EKV by e^x/F = %f [derived]", (ic, ratio) => {
    // Solve F(x) = IC by bisection, then compare e^x / F(x).
    let lo = -40;
    let hi = 10;
    for (let k = 0; k < 200; k++) {
      const mid = (lo + hi) / 2;
      if (ekvF(mid) < ic) lo = mid;
      else hi = mid;
    }
    expect(Math.exp(lo) / ekvF(lo)).toBeCloseTo(ratio, ratio > 1.2 ? 3 : 4);
  });

  it("deep in weak inversion an EKV network matches the weak model with I0 = ispec·exp(−κ·VT0/U_T) [derived]", () => {
    // A short diffuser chain at IC ≈ 1e-7: both solves must agree to about √IC.
    const ispec = 200e-9;
    const vt0 = 0.45;
    const ut = thermalVoltage(T);
    const i0 = ispec * Math.exp((-0.7 * vt0) / ut);
    const weak = solve(chain(9, 4, 0.32, 0.3, 2e-12).set({ i0, ispec, vt0 }));
    const ekv = solve(chain(9, 4, 0.32, 0.3, 2e-12).set({ ispec, vt0, model: "ekv" }));
    const pw = only(weak);
    const pe = only(ekv);
    expect(pw.solver.method).toBe("linear");
    expect(pe.solver.method).toBe("newton");
    expect(ekv.reason).toMatch(/EKV/);
    for (let k = 0; k < 9; k++) {
      const ic = pe.ic[k];
      expect(ic).toBeLessThan(1e-5);
      expect(rel(dev(ekv, pe, `out${k}`), dev(weak, pw, `out${k}`))).toBeLessThan(5 * Math.sqrt(ic) + 1e-9);
    }
  });

  it("in strong inversion EKV gives the square law: I ≈ ispec·(W/L)·((Vp − Vs)/2U_T)² [derived from F(x) → (x/2)² for large x]", () => {
    const ispec = 100e-9;
    const b = new NetworkText("strong")
      .set({ temp: T, ispec, vt0: 0.4, model: "ekv" })
      .rail("g", 1.4)
      .rail("d", 3)
      .rail("gnd", 0)
      .nfet("m", { gate: "g", source: "gnd", drain: "d" });
    const run = solve(b);
    const p = only(run);
    const ut = thermalVoltage(T);
    const x = (0.7 * (1.4 - 0.4)) / ut;
    expect(rel(p.currents[0], ispec * ekvF(x))).toBeLessThan(1e-12);
    expect(rel(p.currents[0], ispec * (x / 2) ** 2)).toBeLessThan(0.02);
    expect(p.ic[0]).toBeGreaterThan(10);
  });
});

describe("temperature (docs/physics.md §9 Temperature: U_T ∝ T, a fact; values [derived])", () => {
  it("the pair ratio at 10 mV is 1.3839 / 1.3108 / 1.2612 at 250 / 300.15 / 350 K (one temp sweep)", () => {
    const run = solve(pair(0.01, 100e-9).sweep("temp", [250, 300.15, 350]));
    expect(run.ok).toBe(true);
    expect(run.points.map((p) => p.params.temp)).toEqual([250, 300.15, 350]);
    const ratios = run.points.map((p) => p.currents[0] / p.currents[1]);
    expect(ratios[0]).toBeCloseTo(1.3839, 4);
    expect(ratios[1]).toBeCloseTo(1.3108, 4);
    expect(ratios[2]).toBeCloseTo(1.2612, 4);
  });

  it("the chain's space constant at Vh − Vv = 0.25 V is 58.07 / 29.46 / 18.20 nodes", () => {
    const run = solve(chain(101, 50, 0.75, 0.5, 1e-10).sweep("temp", [250, 300.15, 350]));
    expect(run.ok).toBe(true);
    const expected = [58.07, 29.46, 18.2];
    run.points.forEach((p, t) => {
      // Away from the sink, u_{k−1} + u_{k+1} = 2cosh θ·u_k; outputs are Gv·u_k.
      const i = (k: number) => dev(run, p, `out${k}`);
      const k = 20;
      const theta = Math.acosh((i(k - 1) + i(k + 1)) / (2 * i(k)));
      expect(1 / theta).toBeCloseTo(expected[t], 2);
    });
  });
});
