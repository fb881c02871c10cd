/**
 * The space_constant() built-in and goal-seek (src/lang/expr.ts, src/solver/goal-seek.ts) against the
 * finite 1-D diffuser chain's closed form (docs/physics.md §6 1-D diffuser chain [derived, checked numerically]):
 * I_k/Iin = w_k/Σw, w_k = cosh((min(k, j) + ½)θ)·cosh((N − max(k, j) − ½)θ), cosh θ = 1 + g/2,
 * g = exp(κ(Vv − Vh)/U_T) for equal sizes; the space constant is 1/θ taps. Goal-seek is Brent's method
 * (R. P. Brent, Algorithms for Minimization without Derivatives, 1973).
 */
import { describe, expect, it } from "vitest";
import { logSlopeFit } from "../../src/lang/expr";
import type { Network } from "../../src/lang/network";
import { thermalVoltage } from "../../src/lang/point";
import { goalSeek, goalSeekSweep } from "../../src/solver/goal-seek";
import { probeValues } from "../../src/solver/sensitivity";
import { NetworkText } from "../helpers/network-text";

const T = 300.15;
const KAPPA = 0.7;

function closedForm(N: number, j: number, theta: number): number[] {
  const w = Array.from(
    { length: N },
    (_, k) => Math.cosh((Math.min(k, j) + 0.5) * theta) * Math.cosh((N - Math.max(k, j) - 0.5) * theta),
  );
  const sum = w.reduce((a, b) => a + b, 0);
  return w.map((x) => x / sum);
}

/** A chain of N taps, input at j, lateral gate `vh` (a param), outputs read at taps [from, to]. */
function chain(N: number, j: number, vh: number, taps: [number, number], pre?: (b: NetworkText) => void): Network {
  const b = new NetworkText("chain").set({ temp: T }).param("vh", vh);
  pre?.(b);
  b.rail("vhr", "vh").rail("vv", 0.6);
  b.rail("vd", 1.8).rail("gnd", 0);
  for (let k = 0; k < N; k++) b.nfet(`out${k}`, { gate: "vv", source: `n${k}`, drain: "vd" });
  for (let k = 0; k + 1 < N; k++) b.nfet(`lat${k}`, { gate: "vhr", source: `n${k}`, drain: `n${k + 1}` });
  b.inject("iin", { from: `n${j}`, to: "gnd", value: pre ? "iin_v" : 10e-9 });
  const reads = [];
  for (let k = taps[0]; k <= taps[1]; k++) reads.push(`current(out${k})`);
  b.probe("lambda", `space_constant(${reads.join(", ")})`);
  b.probe("lambda_err", `space_constant_error(${reads.join(", ")})`);
  return b.build();
}

describe("space_constant() against the finite chain's closed form (docs/physics.md §6)", () => {
  it("N = 101, j = 50, Vh − Vv = 0.25 V: the fit of the solved outputs equals the fit of the closed form; 1/θ = 29.459241", () => {
    const ut = thermalVoltage(T);
    const g = Math.exp((-KAPPA * 0.25) / ut);
    const theta = Math.acosh(1 + g / 2);
    expect(Math.abs(1 / theta - 29.459241)).toBeLessThan(5e-7);
    const p = probeValues(chain(101, 50, 0.85, [50, 70]));
    const cf = logSlopeFit(closedForm(101, 50, theta).slice(50, 71));
    expect(Math.abs(p.lambda / cf.length - 1)).toBeLessThan(1e-9);
    expect(Math.abs(p.lambda_err / cf.error - 1)).toBeLessThan(1e-6);
    // The open end 30 taps away bends the profile: the fit reads longer than 1/θ, by more than its error.
    expect(p.lambda).toBeGreaterThan(1 / theta);
    expect(p.lambda_err).toBeGreaterThan(0);
  });

  it("far from both ends the fit is 1/θ, with an error near zero", () => {
    const ut = thermalVoltage(T);
    const theta = Math.acosh(1 + Math.exp((-KAPPA * 0.1) / ut) / 2);
    const p = probeValues(chain(161, 10, 0.7, [20, 60]));
    expect(Math.abs(p.lambda * theta - 1)).toBeLessThan(1e-9);
    expect(p.lambda_err).toBeLessThan(1e-9);
  });

  it("two values fit exactly (error 0); a zero value gives NaN", () => {
    expect(logSlopeFit([1, Math.exp(-0.5)])).toEqual({ length: 2, error: 0 });
    expect(logSlopeFit([1, 0, 2]).length).toBeNaN();
  });
});

describe("goal-seek (Brent 1973) of the chain's space constant", () => {
  it("finds the lateral gate voltage giving 8 taps, as the closed form Vh = Vv − (U_T/κ)·ln(2(cosh(1/8) − 1))", () => {
    const net = chain(201, 10, 0.7, [30, 70]);
    const r = goalSeek(net, { param: "vh", low: 0.6, high: 0.9, probe: "lambda", target: 8 });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const ut = thermalVoltage(T);
    const vh = 0.6 - (ut / KAPPA) * Math.log(2 * (Math.cosh(1 / 8) - 1));
    expect(Math.abs(r.value - vh)).toBeLessThan(1e-9);
    expect(Math.abs(r.achieved - 8)).toBeLessThan(1e-8);
    expect(r.iterations).toBeGreaterThan(2);
    expect(r.iterations).toBeLessThan(20);
  });

  it("one search per point of another sweep: the inject's value does not move the space constant", () => {
    const net = chain(161, 10, 0.7, [30, 70], (b) => {
      b.param("iin_v", 1e-8).sweep("iin_v", [1e-9, 1e-8, 1e-7]);
    });
    const rs = goalSeekSweep(net, { param: "vh", low: 0.6, high: 0.9, probe: "lambda", target: 6 });
    expect(rs.map((r) => r.overrides)).toEqual([{ iin_v: 1e-9 }, { iin_v: 1e-8 }, { iin_v: 1e-7 }]);
    const ut = thermalVoltage(T);
    const vh = 0.6 - (ut / KAPPA) * Math.log(2 * (Math.cosh(1 / 6) - 1));
    for (const r of rs) expect(r.result.ok && Math.abs(r.result.value - vh)).toBeLessThan(1e-9);
  });

  it("no sign change: says the probe's range over the bracket", () => {
    const net = chain(41, 5, 0.7, [10, 20]);
    const r = goalSeek(net, { param: "vh", low: 0.6, high: 0.7, probe: "lambda", target: 1000 });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.kind).toBe("no-sign-change");
    expect(r.range!.min).toBeGreaterThan(0.5);
    expect(r.range!.max).toBeLessThan(10);
    expect(r.message).toMatch(
      /lambda does not cross 1000 for vh in \[0\.6, 0\.7\]: over the 9 points tried it stays within/,
    );
  });

  it("a bound hit: the target is met only at the bracket's end", () => {
    const net = chain(41, 5, 0.7, [10, 20]);
    const atHigh = probeValues(chain(41, 5, 0.75, [10, 20])).lambda;
    const r = goalSeek(net, { param: "vh", low: 0.6, high: 0.75, probe: "lambda", target: atHigh });
    expect(r.ok === false && r.kind).toBe("bound");
    expect(r.ok === false && r.at).toBe(0.75);
  });

  it("a point that fails to solve is named with its value and the solver's reason", () => {
    // Pushing current into an n-channel node that only a channel to the drain rail can take away: beyond its
    // largest current there is no operating point (docs/physics.md §3 Pseudo-voltages).
    const net = new NetworkText("push")
      .set({ temp: T })
      .param("ip", 1e-12)
      .rail("vd", 1.8)
      .rail("vg", 0.5)
      .rail("gnd", 0)
      .nfet("m1", { gate: "vg", source: "x", drain: "gnd" })
      .inject("i1", { from: "vd", to: "x", value: "ip" })
      .probe("v", "voltage(x)")
      .build();
    const r = goalSeek(net, { param: "ip", low: 1e-12, high: 1e-3, probe: "v", target: 0.1 });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.kind).toBe("point-failed");
    expect(r.at).toBe(1e-3);
    expect(r.message).toMatch(/the point ip = 0\.001 failed: no physical operating point/);
  });

  it("a param or probe that does not exist, or an empty bracket, is refused", () => {
    const net = chain(11, 5, 0.7, [5, 8]);
    expect(goalSeek(net, { param: "nope", low: 0, high: 1, probe: "lambda", target: 1 })).toMatchObject({
      ok: false,
      kind: "bad-spec",
      message: "no param named nope to search (params: vh)",
    });
    expect(goalSeek(net, { param: "vh", low: 1, high: 0, probe: "lambda", target: 1 })).toMatchObject({
      kind: "bad-spec",
    });
    expect(goalSeek(net, { param: "vh", low: 0, high: 1, probe: "x", target: 1 })).toMatchObject({ kind: "bad-spec" });
  });
});
