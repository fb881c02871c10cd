/**
 * Newton on CMOS inverters whose output sits within picovolts of a rail.
 *
 * There the conducting device's forward and reverse currents are of order
 * 1 A and cancel to nanoamperes, so one unit in the last place of the output
 * voltage moves its KCL sum by ~1e-14 A: the convergence test must accept a
 * KCL error at the resolution of double precision (newton.ts), and the answer
 * must still be right. References: the weak-inversion drain current of
 * docs/physics.md §2 Weak-inversion drain current (C. Mead, Analog VLSI and Neural Systems, Addison-Wesley,
 * 1989 [confirmed record]; E. Vittoz, "Analog VLSI signal processing: why,
 * where and how?", J. VLSI Signal Processing 8, 27–44, 1994 [confirmed]),
 * written out again below, the output found by bisection on nfet current =
 * pfet current; U_T = kT/q with the exact SI constants (docs/physics.md §1 Thermal voltage: BIPM,
 * The International System of Units, 9th ed., 2019 [confirmed]).
 */
import { describe, expect, it } from "vitest";
import type { Network } from "../../src/lang/network";
import { NetworkText } from "../helpers/network-text";
import { deviceParams } from "../../src/solver/device";
import { initialGuess, planNewton, solveNewton } from "../../src/solver/newton";
import { solveNetwork } from "../../src/solver/sweep";

const T = 300.15;
const UT = (1.380649e-23 * T) / 1.602176634e-19;
const KAPPA = 0.7;
const I0 = 1e-15;
const VDD = 1.8;

/**
 * Output of an inverter (nfet source on 0 V, pfet source and well on VDD,
 * W/L = 1, no load) whose gates are at vin: the V where
 *   I0·e^{κ·vin/U_T}·(1 − e^{−V/U_T}) = I0·e^{κ(VDD−vin)/U_T}·(1 − e^{−(VDD−V)/U_T}).
 * Bisection on whichever of V and VDD − V is the smaller (so that a value
 * picovolts from a rail keeps its digits), until the bracket stops shrinking.
 */
function inverterOut(vin: number): number {
  const a = I0 * Math.exp((KAPPA * vin) / UT);
  const b = I0 * Math.exp((KAPPA * (VDD - vin)) / UT);
  // Current into the output node for V = y (low side) or V = VDD − y (high side); increases with y.
  const low = (y: number) => a * -Math.expm1(-y / UT) - b * -Math.expm1(-(VDD - y) / UT);
  const high = (y: number) => b * -Math.expm1(-y / UT) - a * -Math.expm1(-(VDD - y) / UT);
  const side = low(VDD / 2) >= 0 ? low : high;
  let lo = 0;
  let hi = VDD / 2;
  for (let k = 0; k < 5000; k++) {
    const mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (side(mid) >= 0) hi = mid;
    else lo = mid;
  }
  const y = 0.5 * (lo + hi);
  return side === low ? y : VDD - y;
}

/**
 * The solver's output must be the exact answer for a gate voltage within DVIN
 * of the one it was given (rounding in the exponents' arguments amounts to
 * ~1e-15 V at the gate; near vin = VDD/2 both devices saturate and the
 * output is that ill-conditioned), within VTOL.
 */
const DVIN = 1e-13;
const VTOL = 1e-13;
function expectOutput(v: number, vin: number): void {
  const top = inverterOut(vin - DVIN);
  const bottom = inverterOut(vin + DVIN);
  expect(v).toBeGreaterThanOrEqual(bottom - VTOL);
  expect(v).toBeLessThanOrEqual(top + VTOL);
}

/** A chain of n inverters, input rail vin, outputs x1..xn. */
function chain(n: number, vin: number): Network {
  const b = new NetworkText().set({ temp: T, kappa: KAPPA, i0: I0 }).rail("vdd", VDD).rail("gnd", 0).rail("vin", vin);
  for (let k = 1; k <= n; k++) {
    const g = k === 1 ? "vin" : `x${k - 1}`;
    b.pfet(`p${k}`, { gate: g, source: "vdd", drain: `x${k}`, well: "vdd" });
    b.nfet(`n${k}`, { gate: g, source: "gnd", drain: `x${k}` });
  }
  return b.build();
}

const VINS = Array.from({ length: 19 }, (_, k) => k / 10);

describe("Newton on an inverter whose output is within picovolts of a rail", () => {
  it("the bisection reference: ~1e-11 V below VDD at vin = 0.5 V, symmetric about VDD/2, ill-conditioned only there", () => {
    expect(VDD - inverterOut(0.5)).toBeGreaterThan(1e-12);
    expect(VDD - inverterOut(0.5)).toBeLessThan(1e-10);
    // VDD − 1.3 and 0.5 differ by an ulp, and VDD − (VDD − y) rounds to an ulp of VDD: equal within 1e-15 V.
    expect(Math.abs(inverterOut(1.3) - (VDD - inverterOut(0.5)))).toBeLessThan(1e-15);
    // At vin = VDD/2 both devices saturate and no drain conductance holds the output: the
    // picovolt-wide window of gate voltages spans a wide range of outputs (VDD/2 among them),
    // elsewhere a range below 1e-14 V.
    expect(inverterOut(0.9 + DVIN)).toBeLessThan(0.9 - 0.1);
    expect(inverterOut(0.9 - DVIN)).toBeGreaterThan(0.9 + 0.1);
    for (const vin of [0.5, 0.8, 1.0, 1.3])
      expect(inverterOut(vin - DVIN) - inverterOut(vin + DVIN)).toBeLessThan(1e-14);
  });

  it("converges at vin = 0, 0.1, …, 1.8 V to the output of the device equation", () => {
    for (const vin of VINS) {
      const net = chain(1, vin);
      const run = solveNetwork(net);
      expect(run.failures, `vin = ${vin}`).toEqual([]);
      expect(run.ok).toBe(true);
      expect(run.points[0].solver.method).toBe("newton");
      const v = run.points[0].voltages[net.nodes.index.get("x1")!];
      expectOutput(v, vin);
      // The current, read from the device that is saturated (the other one's drain-source
      // voltage may be below an ulp of VDD, where its current is not resolved in double precision).
      if (vin === 0.9) continue;
      const on = vin < 0.9 ? "n1" : "p1";
      const vds = vin < 0.9 ? v : VDD - v;
      const vgs = vin < 0.9 ? vin : VDD - vin;
      const expected = I0 * Math.exp((KAPPA * vgs) / UT) * -Math.expm1(-vds / UT);
      const got = run.points[0].currents[net.devices.index.get(on)!];
      expect(Math.abs(got - expected)).toBeLessThanOrEqual(1e-9 * expected);
    }
  });

  it("source stepping alone reaches the same answers", () => {
    for (const vin of VINS) {
      const net = chain(1, vin);
      const plan = planNewton(net);
      const V = new Float64Array(net.nodes.names.length);
      initialGuess(net, V);
      const r = solveNewton(plan, net, deviceParams(net, null), V, { forceContinuation: true });
      expect(r, `vin = ${vin}`).toMatchObject({ ok: true, continuation: true });
      expectOutput(V[net.nodes.index.get("x1")!], vin);
    }
  });

  it("a chain of 5 inverters converges, each output that of the device equation at its own input", () => {
    for (const vin of VINS) {
      const net = chain(5, vin);
      // At vin = VDD/2 exactly, only plain Newton from the initial guess (every output at VDD/2,
      // where KCL holds exactly) is asked for: see the reference test above.
      for (const forceContinuation of vin === 0.9 ? [false] : [false, true]) {
        const plan = planNewton(net);
        const V = new Float64Array(net.nodes.names.length);
        initialGuess(net, V);
        const r = solveNewton(plan, net, deviceParams(net, null), V, { forceContinuation });
        expect(r.ok, `vin = ${vin}, continuation ${forceContinuation}: ${r.ok ? "" : r.message}`).toBe(true);
        // Gates draw no current: stage k's output depends on its input alone.
        let input = vin;
        for (let k = 1; k <= 5; k++) {
          const out = V[net.nodes.index.get(`x${k}`)!];
          expectOutput(out, input);
          input = out;
        }
      }
    }
  });
});

describe("a Newton point whose channel currents double precision cannot resolve says so", () => {
  it("vin = 0.2 V: the output is within an ulp of VDD, the pfet's current is not resolved and the point carries an accuracy warning naming x1; at 0.8 V it carries none", () => {
    const low = chain(1, 0.2);
    const run = solveNetwork(low);
    expect(run.ok).toBe(true);
    const p = run.points[0];
    // The nfet's saturated current is right (test above); the pfet's, from V_SD below an ulp of VDD, is not.
    const i_n = p.currents[low.devices.index.get("n1")!];
    const i_p = p.currents[low.devices.index.get("p1")!];
    expect(Math.abs(i_p - i_n)).toBeGreaterThan(1e-6 * i_n);
    const w = p.warnings.find((x) => x.kind === "accuracy");
    expect(w, JSON.stringify(p.warnings)).toBeDefined();
    expect(w!.message).toMatch(/KCL error at node x1 .* resolved only to about that/);
    const mid = solveNetwork(chain(1, 0.8));
    expect(mid.points[0].warnings.filter((x) => x.kind === "accuracy")).toEqual([]);
  });
});
