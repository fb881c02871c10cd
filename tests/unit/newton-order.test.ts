/**
 * Newton's LU column order: approximate minimum degree below NESTED_FROM rows,
 * nested dissection from there (newton.ts). Both must give the answer of the
 * device equation. The network: an n × n mesh of lateral nfets (gate on a rail),
 * a diode-connected nfet (gate = drain) at every node and the same 1 nA pushed
 * into every node. By symmetry no lateral current flows, so every node sits where
 * its diode carries 1 nA: I0·e^{κV/U_T}·(1 − e^{−V/U_T}) = 1 nA (the weak-inversion
 * equation of docs/physics.md §2 Weak-inversion drain current; C. Mead, Analog VLSI and Neural Systems, 1989), solved
 * here by bisection.
 */
import { describe, expect, it } from "vitest";
import { NetworkText } from "../helpers/network-text";
import { solveNetwork } from "../../src/solver/sweep";

const T = 300.15;
const UT = (1.380649e-23 * T) / 1.602176634e-19;
const KAPPA = 0.7;
const I0 = 1e-15;
const I = 1e-9;

function diodeVoltage(): number {
  let lo = 0;
  let hi = 1.8;
  for (let k = 0; k < 200; k++) {
    const v = (lo + hi) / 2;
    if (I0 * Math.exp((KAPPA * v) / UT) * -Math.expm1(-v / UT) < I) lo = v;
    else hi = v;
  }
  return (lo + hi) / 2;
}

function mesh(n: number) {
  const b = new NetworkText("mesh")
    .set({ temp: T, kappa: KAPPA, i0: I0 })
    .rail("vdd", 1.8)
    .rail("gnd", 0)
    .rail("gh", 0.75);
  const at = (i: number, j: number) => `n${i}_${j}`;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (j + 1 < n) b.nfet(`h${i}_${j}`, { gate: "gh", source: at(i, j), drain: at(i, j + 1) });
      if (i + 1 < n) b.nfet(`v${i}_${j}`, { gate: "gh", source: at(i, j), drain: at(i + 1, j) });
      b.nfet(`d${i}_${j}`, { gate: at(i, j), source: "gnd", drain: at(i, j) });
      b.inject(`p${i}_${j}`, { from: "vdd", to: at(i, j), value: I });
    }
  }
  return b.build();
}

describe("Newton's column order on meshes (closed form: a diode at 1 nA, by symmetry)", () => {
  it.each([
    [40, "amd"],
    [70, "nd"],
  ])("a mesh of side %i: ordered by %s, every node at the diode's voltage", (n, ordering) => {
    const net = mesh(n);
    const run = solveNetwork(net);
    expect(run.failures).toEqual([]);
    const p = run.points[0];
    expect(p.solver.method).toBe("newton");
    expect(p.solver.ordering).toBe(ordering);
    const v = diodeVoltage();
    let worst = 0;
    for (let k = 0; k < net.nodes.names.length; k++)
      if (!Number.isFinite(net.nodes.railValue[k])) worst = Math.max(worst, Math.abs(p.voltages[k] - v));
    expect(worst).toBeLessThan(1e-9);
  });
});
