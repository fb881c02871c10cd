/**
 * The per-point evaluation of a run (currents, inversion coefficients,
 * saturation, rail currents) along an inject-only sweep, where the solver
 * reuses its factorisation and superposes inject responses, checked against
 * the weak-inversion law itself:
 *   p-channel I(s→d) = I0·(W/L)·exp(κ(Vw − Vg)/U_T)·[exp(−(Vw − Vs)/U_T) − exp(−(Vw − Vd)/U_T)]
 * (docs/physics.md §2 Weak-inversion drain current: C. Mead, Analog VLSI and Neural Systems, 1989 [confirmed record];
 * E. Vittoz, "Analog VLSI signal processing: why, where and how?", 1994 [confirmed]),
 * the inversion coefficient IC = I_F/(Ispec·W/L) (docs/physics.md §4 EKV all-region model [memory]) and
 * KCL at the internal node (common practice).
 */
import { describe, expect, it } from "vitest";
import { NetworkText } from "../helpers/network-text";
import type { PointResult } from "../../src/solver/results";
import { solveNetwork } from "../../src/solver/sweep";

function mirror() {
  return new NetworkText()
    .set({ ispec: 1e-7 })
    .param("iin", 1e-9)
    .rail("vdd", 1.8)
    .rail("vg", 1.0)
    .rail("gnd", 0)
    .pfet("a", { gate: "vg", well: "vdd", source: "vdd", drain: "x" })
    .pfet("b", { gate: "vg", well: "vdd", source: "x", drain: "gnd", w: 2e-6 })
    .inject("i", { from: "x", to: "gnd", value: "iin" })
    .sweep("iin", [1e-10, 1e-9, 5e-9, 2e-8])
    .build();
}

describe("evaluation along an inject-only sweep", () => {
  it("reports currents, ic and saturation that follow the weak-inversion law at every point", () => {
    const net = mirror();
    const run = solveNetwork(net);
    expect(run.ok).toBe(true);
    expect(run.method).toBe("linear");
    expect(run.points.length).toBe(4);
    const { i0, kappa, ut } = net.settings;
    const ix = net.nodes.names.indexOf("x");
    const vdd = net.nodes.names.indexOf("vdd");
    const gnd = net.nodes.names.indexOf("gnd");
    // Checked after the whole run: each point's arrays are its own (no storage shared between points).
    for (const p of run.points) {
      const V = p.voltages;
      const iin = p.params.iin;
      for (let d = 0; d < 2; d++) {
        const wl = net.devices.w[d] / net.devices.l[d];
        const vw = V[net.devices.bulk[d]];
        const g = i0 * wl * Math.exp((kappa * (vw - V[net.devices.gate[d]])) / ut);
        const iF = g * Math.exp(-(vw - V[net.devices.source[d]]) / ut);
        const iR = g * Math.exp(-(vw - V[net.devices.drain[d]]) / ut);
        expect(Math.abs(p.currents[d] - (iF - iR))).toBeLessThan(1e-9 * Math.abs(iF));
        expect(Math.abs(p.ic[d] - iF / (1e-7 * wl))).toBeLessThan(1e-9 * (iF / (1e-7 * wl)));
        const vsd = V[net.devices.source[d]] - V[net.devices.drain[d]];
        expect(p.saturated[d]).toBe(vsd > 4 * ut ? 1 : 0);
      }
      // KCL at x: what a delivers is what b and the inject take.
      expect(Math.abs(p.currents[0] - p.currents[1] - iin)).toBeLessThan(1e-9 * iin);
      expect(p.solver.residual).toBeLessThan(1e-9 * iin);
      // Rails: vdd delivers a's current, gnd takes b's and the inject's; NaN at the internal node.
      expect(Math.abs(p.railCurrents[vdd] - p.currents[0])).toBeLessThan(1e-9 * iin);
      expect(Math.abs(p.railCurrents[gnd] + p.currents[1] + iin)).toBeLessThan(1e-9 * iin);
      expect(Number.isNaN(p.railCurrents[ix])).toBe(true);
    }
    expect(run.points.slice(1).every((p) => p.solver.reusedFactor)).toBe(true);
  });

  it("gives the same values when points are not kept (each handed to onPoint)", () => {
    const kept = solveNetwork(mirror()).points;
    const seen: PointResult[] = [];
    solveNetwork(mirror(), { keepPoints: false, onPoint: (p) => seen.push(p) });
    expect(seen.length).toBe(kept.length);
    for (let k = 0; k < kept.length; k++) {
      expect(Array.from(seen[k].voltages)).toEqual(Array.from(kept[k].voltages));
      expect(Array.from(seen[k].currents)).toEqual(Array.from(kept[k].currents));
      expect(Array.from(seen[k].ic)).toEqual(Array.from(kept[k].ic));
      expect(Array.from(seen[k].saturated)).toEqual(Array.from(kept[k].saturated));
      expect(Array.from(seen[k].railCurrents)).toEqual(Array.from(kept[k].railCurrents));
      expect(seen[k].solver.residual).toBe(kept[k].solver.residual);
    }
  });

  it("with reuseArrays hands every point the same arrays, holding that point's values while onPoint runs", () => {
    const kept = solveNetwork(mirror()).points;
    const copies: { v: number[]; i: number[]; ic: number[]; s: number[]; r: number[]; arrays: Float64Array[] }[] = [];
    solveNetwork(mirror(), {
      keepPoints: false,
      reuseArrays: true,
      onPoint: (p) =>
        copies.push({
          v: Array.from(p.voltages),
          i: Array.from(p.currents),
          ic: Array.from(p.ic),
          s: Array.from(p.saturated),
          r: Array.from(p.railCurrents),
          arrays: [p.voltages, p.currents],
        }),
    });
    expect(copies.length).toBe(kept.length);
    for (let k = 0; k < kept.length; k++) {
      expect(copies[k].v).toEqual(Array.from(kept[k].voltages));
      expect(copies[k].i).toEqual(Array.from(kept[k].currents));
      expect(copies[k].ic).toEqual(Array.from(kept[k].ic));
      expect(copies[k].s).toEqual(Array.from(kept[k].saturated));
      expect(copies[k].r).toEqual(Array.from(kept[k].railCurrents));
      expect(copies[k].arrays[0]).toBe(copies[0].arrays[0]);
      expect(copies[k].arrays[1]).toBe(copies[0].arrays[1]);
    }
  });
});
