/**
 * Four numerical edge cases, each against an answer derived by hand from the
 * weak-inversion drain current of docs/physics.md §2 (C. Mead, Analog VLSI and
 * Neural Systems, Addison-Wesley, 1989 [confirmed record]; E. Vittoz, "Analog
 * VLSI signal processing: why, where and how?", J. VLSI Signal Processing 8,
 * 27–44, 1994 [confirmed]):
 *   I = i0·(W/L)·e^{κ·Vg/U_T}·(e^{−Vs/U_T} − e^{−Vd/U_T})   (nfet; pfet mirrored about its well),
 * U_T = kT/q with the exact SI 2019 constants (BIPM, The International System
 * of Units, 9th ed., 2019 [confirmed]).
 */
import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";
import type { Network } from "../../src/lang/network";
import { solveNetwork } from "../../src/solver/sweep";

const UT = (1.380649e-23 * 300) / 1.602176634e-19; // default temp 300 K
const KAPPA = 0.7;
const I0 = 1e-15;

function network(text: string): Network {
  const r = elaborate(text);
  if (!r.network) throw new Error(r.diagnostics.map((d) => `${d.line}: ${d.message}`).join("\n"));
  return r.network;
}

describe("numerical edge cases", () => {
  it("injects that cancel at a node whose only channel goes to a 1.8 V rail: the rail's voltage, no current", () => {
    // Net current into x is 0, so the channel carries none: e^{−Vx/U_T} = e^{−1.8/U_T}, Vx = 1.8 V exactly.
    // (The rail's pseudo-voltage term is ~1e-26 of one inject's: summed before the injects cancel, it was lost.)
    const net = network(`param i = 1n
rail vdd = 1.8
rail vg = 0.9
rail gnd = 0
nfet m gate=vg source=x drain=vdd
inject a from=x to=gnd value=i
inject b from=gnd to=x value=i
sweep i values [1n, 2n, 5n]
`);
    const run = solveNetwork(net);
    expect(run.failures).toEqual([]);
    const x = net.nodes.index.get("x") as number;
    const vdd = net.nodes.index.get("vdd") as number;
    expect(run.points.length).toBe(3);
    for (const p of run.points) {
      expect(p.ok).toBe(true);
      expect(Math.abs(p.voltages[x] - 1.8)).toBeLessThan(1e-12);
      expect(Math.abs(p.currents[0])).toBeLessThan(1e-24);
      expect(Math.abs(p.railCurrents[vdd])).toBeLessThan(1e-24);
    }
    // The later points are superposed on the first one's factorisation: the same answer.
    expect(run.points[2].solver.reusedFactor).toBe(true);
  });

  it("channel conductances 18 decades apart: the refusal names the precision, not a missing conductance", () => {
    // lat's conductance over oy's (equal W/L): e^{κ(1.75 − 0.2)/U_T} = 10^18.2, beyond double precision's 16 decades.
    const decades = (KAPPA * (1.75 - 0.2)) / (UT * Math.LN10);
    expect(decades).toBeCloseTo(18.23, 2);
    const net = network(`rail vdd = 1.8
rail gnd = 0
rail gl = 1.75
rail gv = 0.2
nfet lat gate=gl source=x drain=y
nfet ox gate=gv source=x drain=vdd
nfet oy gate=gv source=y drain=vdd
inject i from=x to=gnd value=1f
`);
    const run = solveNetwork(net);
    expect(run.ok).toBe(false);
    const message = run.failures[0].message;
    expect(message).not.toMatch(/no conductance to a rail/);
    expect(message).toMatch(/which does reach a rail/);
    expect(message).toContain(`span ${decades.toFixed(1)} decades (lat against o`);
    expect(message).toMatch(/more than double precision resolves/);
  });

  it("a pfet whose well sits 0.8 V below its source and drain: not a reported operating point, and it says why", () => {
    // Well 1.0 V under a 1.8 V source: the junction is forward-biased by 0.8 V, and the channel's forward and
    // reverse currents, i0·e^{κ(Vw − Vg)/U_T}·e^{(V − Vw)/U_T} ≈ 6 A each, cancel to the nanoamperes the nfet carries.
    const forward = I0 * Math.exp((KAPPA * (1.0 - 0.8)) / UT) * Math.exp((1.8 - 1.0) / UT);
    expect(forward).toBeGreaterThan(1);
    const text = (well: string) => `rail vdd = 1.8
rail nw = 1.0
rail vg = 0.8
rail gnd = 0
rail gn = 0.5
pfet p gate=vg source=vdd drain=x well=${well}
nfet n gate=gn source=x drain=gnd
`;
    const run = solveNetwork(network(text("nw")));
    expect(run.ok).toBe(false);
    expect(run.points[0].ok).toBe(false);
    expect(run.failures[0].message).toMatch(
      /^no reliable operating point: p's (source|drain) is beyond its well by 0\.800 V/,
    );
    expect(run.failures[0].message).toMatch(/forward-biased junction/);
    expect(run.failures[0].message).toContain(`${forward.toExponential(2)} A`);
    // With its well on its source the same network is an ordinary operating point: both devices carry one current.
    const fine = solveNetwork(network(text("vdd")));
    expect(fine.ok).toBe(true);
    const p = fine.points[0];
    expect(Math.abs(p.currents[0] + p.currents[1]) / p.currents[0]).toBeLessThan(1e-6); // KCL_LIMIT
  });

  it("a symmetric latch at its balance point: solved, and warned that the point is unstable and others exist", () => {
    // Identical n and p devices: by symmetry Va = Vb = VDD/2 = 0.9 V solves KCL. There, for node a,
    // ∂F_a/∂V_a = −(g_dsn + g_dsp) and ∂F_a/∂V_b = −(g_mn + g_mp), with g_m = κ·I/U_T ≫ g_ds = I_R/U_T,
    // so det J = (g_dsn + g_dsp)² − (g_mn + g_mp)² < 0 while a stable point of 2 nodes has det J > 0.
    const latch = network(`rail vdd = 1.8
rail gnd = 0
pfet p1 gate=b source=vdd drain=a well=vdd
nfet n1 gate=b source=gnd drain=a
pfet p2 gate=a source=vdd drain=b well=vdd
nfet n2 gate=a source=gnd drain=b
`);
    const run = solveNetwork(latch);
    expect(run.ok).toBe(true);
    const p = run.points[0];
    const a = latch.nodes.index.get("a") as number;
    const b = latch.nodes.index.get("b") as number;
    expect(Math.abs(p.voltages[a] - 0.9)).toBeLessThan(1e-9);
    expect(Math.abs(p.voltages[b] - 0.9)).toBeLessThan(1e-9);
    const i = I0 * Math.exp((KAPPA * 0.9) / UT) * -Math.expm1(-0.9 / UT);
    expect(Math.abs(p.currents[1] - i) / i).toBeLessThan(1e-9);
    const gm = (KAPPA * i) / UT;
    const gds = (I0 * Math.exp((KAPPA * 0.9) / UT) * Math.exp(-0.9 / UT)) / UT;
    expect((2 * gds) ** 2 - (2 * gm) ** 2).toBeLessThan(0);
    const w = p.warnings.find((x) => x.kind === "unstable");
    expect(w, JSON.stringify(p.warnings)).toBeDefined();
    expect(w?.message).toMatch(/unstable.*other operating points/);
    // Two inverters in a row (no loop) at the same bias: stable, no such warning.
    const chain = solveNetwork(
      network(`rail vdd = 1.8
rail gnd = 0
rail vin = 0.9
pfet p1 gate=vin source=vdd drain=a well=vdd
nfet n1 gate=vin source=gnd drain=a
pfet p2 gate=a source=vdd drain=b well=vdd
nfet n2 gate=a source=gnd drain=b
`),
    );
    expect(chain.ok).toBe(true);
    expect(chain.points[0].warnings.filter((x) => x.kind === "unstable")).toEqual([]);
  });
});
