/**
 * The linear solve where exp(±V/U_T) spans more than double precision holds,
 * and where it cannot resolve the answer: a result is either right or a
 * failure that says why — never ok with missing or wrong numbers.
 * Unless stated: T = 300.15 K, κ = 0.7, I0 = 1e-15 A, W/L = 1 (docs/physics.md, Conventions).
 */
import { describe, expect, it } from "vitest";
import { NetworkText } from "../helpers/network-text";
import { solveNetwork } from "../../src/solver/sweep";

const KAPPA = 0.7;
const I0 = 1e-15;

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

/**
 * Differential pair, both drains on `vdd`, the common source drawn by a sink of ib
 * (docs/physics.md §5 Differential pair; C. Mead, Analog VLSI and Neural Systems, 1989 [formula derived]):
 * with the drains many U_T above the tail, I_k = I0·exp(κV_k/U_T)·exp(−V_tail/U_T), so
 * I1/I2 = exp(κ(V1 − V2)/U_T) and, from I1 + I2 = ib,
 * V_tail = U_T·ln(I0·(exp(κV1/U_T) + exp(κV2/U_T))/ib).
 */
function pair(vdd: number, v1: number, v2: number, ib: number, temp = 300.15) {
  const net = new NetworkText("pair")
    .set({ temp })
    .rail("vdd", vdd)
    .rail("gnd", 0)
    .rail("g1", v1)
    .rail("g2", v2)
    .nfet("m1", { gate: "g1", source: "tail", drain: "vdd" })
    .nfet("m2", { gate: "g2", source: "tail", drain: "vdd" })
    .inject("ib", { from: "tail", to: "gnd", value: ib })
    .build();
  const run = solveNetwork(net);
  const ut = net.settings.ut;
  // ln(e^a + e^b) without overflow.
  const a = (KAPPA * v1) / ut;
  const b = (KAPPA * v2) / ut;
  const lse = Math.max(a, b) + Math.log1p(Math.exp(-Math.abs(a - b)));
  return {
    run,
    net,
    ratio: Math.exp((KAPPA * (v1 - v2)) / ut),
    vtail: ut * (Math.log(I0) + lse - Math.log(ib)),
  };
}

describe("rails, gates and temperatures far apart in units of U_T (closed forms: Mead 1989, differential pair)", () => {
  it.each([
    ["drains 20 V above the tail (exp(−20 V/U_T) is below the smallest double)", 20, 0.71, 0.69, 20e-9, 300.15],
    ["drains 40 V up, gates at 30 V", 40, 30, 29.98, 20e-9, 300.15],
    ["at 5 K (U_T = 0.43 mV: 1.8 V is 4,200·U_T)", 1.8, 0.71, 0.709, 20e-9, 5],
  ])("%s: I1/I2, I1 + I2 and the tail voltage as the closed form", (_what, vdd, v1, v2, ib, temp) => {
    const { run, net, ratio, vtail } = pair(vdd, v1, v2, ib, temp);
    expect(run.failures).toEqual([]);
    const p = run.points[0];
    const i1 = p.currents[net.devices.index.get("m1") as number];
    const i2 = p.currents[net.devices.index.get("m2") as number];
    expect(rel(i1 / i2, ratio)).toBeLessThan(1e-9);
    expect(rel(i1 + i2, ib)).toBeLessThan(1e-12);
    expect(Math.abs(p.voltages[net.nodes.index.get("tail") as number] - vtail)).toBeLessThan(1e-9);
    expect(Number.isFinite(p.solver.residual)).toBe(true);
    expect(rel(p.railCurrents[net.nodes.index.get("vdd") as number], ib)).toBeLessThan(1e-12);
  });

  it("the p-channel mirror image (wells 20 V up, every voltage measured down from them) gives the n-channel pair's currents", () => {
    const top = 20;
    const n = pair(top, 0.71, 0.69, 20e-9);
    const net = new NetworkText("ppair")
      .set({ temp: 300.15 })
      .rail("vw", top)
      .rail("gnd", 0)
      .rail("g1", top - 0.71)
      .rail("g2", top - 0.69)
      .pfet("m1", { gate: "g1", source: "tail", drain: "gnd", well: "vw" })
      .pfet("m2", { gate: "g2", source: "tail", drain: "gnd", well: "vw" })
      .inject("ib", { from: "vw", to: "tail", value: 20e-9 })
      .build();
    const run = solveNetwork(net);
    expect(run.failures).toEqual([]);
    const p = run.points[0];
    const np = n.run.points[0];
    for (const name of ["m1", "m2"]) {
      const ip = p.currents[net.devices.index.get(name) as number];
      const inn = np.currents[n.net.devices.index.get(name) as number];
      expect(rel(ip, inn)).toBeLessThan(1e-9);
    }
    expect(Math.abs(top - p.voltages[net.nodes.index.get("tail") as number] - n.vtail)).toBeLessThan(1e-9);
  });

  it("a gate so high that the currents leave double precision's range fails, saying so, instead of reporting nulls", () => {
    const net = new NetworkText("hot")
      .rail("vdd", 1.8)
      .rail("gnd", 0)
      .rail("g", 40)
      .nfet("m1", { gate: "g", source: "x", drain: "vdd" })
      .inject("s", { from: "x", to: "gnd", value: 20e-9 })
      .build();
    const run = solveNetwork(net);
    expect(run.ok).toBe(false);
    expect(run.failures[0].message).toMatch(/beyond double precision's range/);
  });
});

/**
 * A row of 64 taps (lateral nfets between neighbours with their gate on vh, an
 * output nfet per tap with its gate on vv and its drain high, a sink per tap).
 * With vh on the 1.8 V supply the lateral channels' forward currents are ~1e5 A
 * against nA through them: the taps' pseudo-voltages differ in the 13th digit
 * and the solve cannot resolve the smoothing. (Measured before this check: the
 * outputs came out 0.7% off with ok reported.) The point must fail, naming a
 * node; at vh = 1.2 V the same row solves and keeps KCL.
 */
function row(vh: number) {
  const b = new NetworkText("row").rail("vdd", 1.8).rail("gnd", 0).rail("gh", vh).rail("gv", 0.65);
  for (let k = 0; k < 64; k++) {
    b.nfet(`out${k}`, { gate: "gv", source: `x${k}`, drain: "vdd" });
    b.inject(`ph${k}`, { from: `x${k}`, to: "gnd", value: k < 32 ? 0.5e-9 : 1.5e-9 });
    if (k > 0) b.nfet(`lat${k}`, { gate: "gh", source: `x${k - 1}`, drain: `x${k}` });
  }
  return b.build();
}

describe("a solve that cannot resolve the network (KCL against the device equations, common practice)", () => {
  it("a lateral gate on the supply: not reported as solved; the message names the node and the cause", () => {
    const net = row(1.8);
    const run = solveNetwork(net);
    expect(run.ok).toBe(false);
    expect(run.points[0].ok).toBe(false);
    expect(run.failures[0].node).toBeGreaterThanOrEqual(0);
    expect(run.failures[0].message).toMatch(
      /results not reliable: the KCL error at node x\d+ is .* more decades than double precision resolves/,
    );
  });

  it("the same row with the lateral gate at 1.2 V solves: the outputs add up to the sinks", () => {
    const net = row(1.2);
    const run = solveNetwork(net);
    expect(run.failures).toEqual([]);
    const p = run.points[0];
    let sum = 0;
    for (let k = 0; k < 64; k++) sum += p.currents[net.devices.index.get(`out${k}`) as number];
    expect(rel(sum, 32 * 0.5e-9 + 32 * 1.5e-9)).toBeLessThan(1e-9);
  });
});
