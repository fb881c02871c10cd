/**
 * Runs: the sweep grid (docs/language.md, Sweeps: first sweep outermost), reuse of the
 * numeric factorisation when only injects change, Newton continuation along a
 * sweep, run controls, and the `solve --json` document of docs/language.md (The runnel command).
 * Physics values here are checked against closed forms of docs/physics.md §5 Differential pair and §8 Current mirror.
 */
import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";
import { applyPoint, thermalVoltage } from "../../src/lang/point";
import { NetworkText } from "../helpers/network-text";
import { toSolveJson } from "../../src/solver/json";
import { solveNetwork, sweepGrid } from "../../src/solver/sweep";

describe("sweep grid", () => {
  it("orders points with the first sweep outermost, and reports every param", () => {
    const net = new NetworkText()
      .param("a", 1)
      .param("b", 10)
      .param("c", 7)
      .rail("gnd", 0)
      .rail("vg", 0.5)
      .nfet("m", { gate: "vg", source: "x", drain: "gnd" })
      .inject("i", { from: "x", to: "gnd", value: "1e-12 * (a + b)" })
      .sweep("a", [1, 2])
      .sweep("b", { from: 10, to: 30, step: 10 })
      .build();
    expect(sweepGrid(net)).toEqual([
      { a: 1, b: 10 },
      { a: 1, b: 20 },
      { a: 1, b: 30 },
      { a: 2, b: 10 },
      { a: 2, b: 20 },
      { a: 2, b: 30 },
    ]);
    const run = solveNetwork(net);
    expect(run.ok).toBe(true);
    expect(run.points.map((p) => p.params)).toEqual(sweepGrid(net).map((o) => ({ ...o, c: 7 })));
    expect(run.points.map((p) => p.index)).toEqual([0, 1, 2, 3, 4, 5]);
  });
});

/** A diffuser chain whose input current and lateral gate are params. */
function chain(sweep: "iin" | "vh") {
  const b = new NetworkText("row")
    .param("iin", 1e-10)
    .param("vh", 0.6)
    .rail("gh", "vh")
    .rail("vv", 0.5)
    .rail("vd", 1.5)
    .rail("gnd", 0);
  for (let k = 0; k < 30; k++) b.nfet(`o${k}`, { gate: "vv", source: `n${k}`, drain: "vd" });
  for (let k = 0; k + 1 < 30; k++) b.nfet(`l${k}`, { gate: "gh", source: `n${k}`, drain: `n${k + 1}` });
  b.inject("in", { from: "n15", to: "gnd", value: "iin" });
  return sweep === "iin"
    ? b.sweep("iin", { from: 1e-11, to: 1e-9, points: 5, log: true }).build()
    : b.sweep("vh", [0.55, 0.6, 0.65]).build();
}

describe("work reuse across points", () => {
  it("a sweep of inject values reuses the numeric factorisation; currents scale with the input", () => {
    const run = solveNetwork(chain("iin"));
    expect(run.ok).toBe(true);
    expect(run.points.map((p) => p.solver.reusedFactor)).toEqual([false, true, true, true, true]);
    // The network is linear in the input current: every output scales with it (docs/physics.md §3 Pseudo-voltages).
    const first = run.points[0];
    for (const p of run.points) {
      const scale = p.params.iin / first.params.iin;
      for (let k = 0; k < 30; k++)
        expect(Math.abs(p.currents[k] / (first.currents[k] * scale) - 1)).toBeLessThan(1e-11);
    }
  });

  it("a superposed point reports what the same point solved on its own reports", () => {
    // A 12 × 12 diffuser grid (lateral and output devices, as in the bench) with the input swept over
    // three decades: the first point factors, the others superpose the input's response (also in their evaluation:
    // currents, saturation and KCL are linear in the pseudo-voltages). Each point against a run of that point alone.
    const n = 12;
    let text = "network g\nparam iin = 1n\nrail gh = 0.72\nrail gv = 0.6\nrail vd = 1\nrail gnd = 0\n";
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) text += `nfet o${i}_${j} gate=gv source=n${i}_${j} drain=vd\n`;
    for (let i = 0; i < n; i++)
      for (let j = 0; j + 1 < n; j++)
        text += `nfet h${i}_${j} gate=gh source=n${i}_${j} drain=n${i}_${j + 1}\nnfet v${j}_${i} gate=gh source=n${j}_${i} drain=n${j + 1}_${i}\n`;
    text += "inject spot from=n5_6 to=gnd value=iin\nsweep iin from 10p to 10n points 7 log\n";
    const { network, diagnostics } = elaborate(text);
    expect(diagnostics.filter((d) => d.severity === "error")).toEqual([]);
    const net = network!;
    const run = solveNetwork(net);
    expect(run.ok).toBe(true);
    expect(run.points.map((p) => p.solver.reusedFactor)).toEqual([false, true, true, true, true, true, true]);
    const ut = net.settings.ut;
    let saturatedSeen = 0;
    let linearSeen = 0;
    for (const p of run.points) {
      const alone = solveNetwork({ ...applyPoint(net, { iin: p.params.iin }), sweeps: [] }).points[0];
      let most = 0;
      for (let d = 0; d < net.devices.count; d++) most = Math.max(most, Math.abs(alone.currents[d]));
      for (let d = 0; d < net.devices.count; d++) {
        expect(Math.abs(p.currents[d] - alone.currents[d])).toBeLessThan(1e-11 * most);
        // Saturation (V_DS > 4·U_T, docs/language.md, Device equations) may differ only at the boundary itself.
        const vds = Math.abs(alone.voltages[net.devices.drain[d]] - alone.voltages[net.devices.source[d]]);
        if (p.saturated[d] !== alone.saturated[d]) expect(Math.abs(vds - 4 * ut)).toBeLessThan(1e-9);
        if (alone.saturated[d]) saturatedSeen++;
        else linearSeen++;
      }
      for (let k = 0; k < net.nodes.names.length; k++) {
        if (Number.isNaN(alone.railCurrents[k])) expect(Number.isNaN(p.railCurrents[k])).toBe(true);
        else expect(Math.abs(p.railCurrents[k] - alone.railCurrents[k])).toBeLessThan(1e-11 * most);
        expect(Math.abs(p.voltages[k] - alone.voltages[k])).toBeLessThan(1e-12);
      }
      // KCL residual (common practice: a direct solve leaves it near rounding of the largest current).
      expect(p.solver.residual).toBeLessThan(1e-12 * most);
      expect(alone.solver.residual).toBeLessThan(1e-12 * most);
    }
    // Both sides of the saturation test occur (the check above is not vacuous).
    expect(saturatedSeen).toBeGreaterThan(0);
    expect(linearSeen).toBeGreaterThan(0);
  });

  it("a sweep of a gate rail refactors at every point", () => {
    const run = solveNetwork(chain("vh"));
    expect(run.ok).toBe(true);
    expect(run.points.map((p) => p.solver.reusedFactor)).toEqual([false, false, false]);
  });

  it("Newton starts each point from the previous solution", () => {
    const net = new NetworkText("mirror")
      .set({ temp: 300.15 })
      .param("vout", 1)
      .rail("gnd", 0)
      .rail("vo", "vout")
      .inject("iin", { from: "gnd", to: "x", value: 10e-9 })
      .nfet("m1", { gate: "x", source: "gnd", drain: "x" })
      .nfet("m2", { gate: "x", source: "gnd", drain: "vo", w: 4e-6 })
      .sweep("vout", { from: 0.05, to: 1, points: 20 })
      .build();
    const run = solveNetwork(net);
    expect(run.ok).toBe(true);
    expect(run.points[5].solver.iterations).toBeLessThan(run.points[0].solver.iterations);
    // Mead 1989 mirror formula (docs/physics.md §8 Current mirror):
    // Iout/Iin = 4(1 − e^{−Vout/U_T})/(1 − e^{−Vx/U_T}).
    const ut = thermalVoltage(300.15);
    const x = net.nodes.index.get("x") as number;
    for (const p of run.points) {
      const ratio = (4 * (1 - Math.exp(-p.params.vout / ut))) / (1 - Math.exp(-p.voltages[x] / ut));
      expect(Math.abs(p.currents[1] / 10e-9 / ratio - 1)).toBeLessThan(1e-8);
    }
  });
});

describe("run controls", () => {
  it("maxPoints, shouldStop, onProgress and keepPoints", () => {
    const net = chain("iin");
    expect(solveNetwork(net, { maxPoints: 2 }).points.length).toBe(2);
    let calls = 0;
    const stopped = solveNetwork(net, { shouldStop: () => calls++ >= 3 });
    expect(stopped.stopped).toBe(true);
    expect(stopped.points.length).toBe(3);
    const progress: [number, number][] = [];
    const seen: number[] = [];
    const quiet = solveNetwork(net, {
      keepPoints: false,
      onProgress: (d, t) => progress.push([d, t]),
      onPoint: (p) => seen.push(p.index),
    });
    expect(quiet.points).toEqual([]);
    expect(quiet.solved).toBe(5);
    expect(seen).toEqual([0, 1, 2, 3, 4]);
    expect(progress.at(-1)).toEqual([5, 5]);
  });
});

describe("solve --json document (docs/language.md, The runnel command)", () => {
  const text = `network pair
set temp = 300.15K
param dv = 10m
rail vdd = 1.8
rail gnd = 0
rail v1 = 0.6 + dv
rail v2 = 0.6
nfet m1 gate=v1 source=tail drain=vdd
nfet m2 gate=v2 source=tail drain=vdd
inject ib from=tail to=gnd value=100n
probe ratio = current(m1)/current(m2)
sweep dv values [0, 10m]
`;

  it("has exactly the documented shape and the pair's check values (docs/physics.md §5 Differential pair)", () => {
    const el = elaborate(text);
    expect(el.ok).toBe(true);
    const run = solveNetwork(el.network!);
    const doc = toSolveJson(el.network, el.diagnostics, run, text);
    expect(Object.keys(doc)).toEqual(["network", "ok", "diagnostics", "points"]);
    expect(doc.network).toBe("pair");
    expect(doc.ok).toBe(true);
    expect(doc.points.length).toBe(2);
    const p = doc.points[1];
    expect(Object.keys(p)).toEqual(["params", "nodes", "rails", "devices", "probes", "solver", "sample"]);
    expect(p.params).toEqual({ dv: 0.01 });
    expect(Object.keys(p.solver)).toEqual(["method", "iterations", "residual", "reason"]);
    expect(p.solver.method).toBe("linear");
    expect(p.sample).toBe(0);
    expect(Object.keys(p.devices.m1)).toEqual(["current", "ic", "saturated"]);
    expect(p.devices.m1.ic).toBeNull();
    expect(p.devices.m1.saturated).toBe(true);
    expect(p.probes.ratio).toBeCloseTo(1.3107989, 7);
    expect(p.devices.m1.current - p.devices.m2.current).toBeCloseTo(13.449845e-9, 14);
    // vdd delivers both drain currents, the tail sink takes 100 nA out through gnd.
    expect(p.rails.vdd).toBeCloseTo(100e-9, 18);
    expect(p.rails.gnd).toBeCloseTo(-100e-9, 18);
    expect(typeof p.nodes.tail).toBe("number");
    // A tail below the substrate is flagged as a warning at the device's line.
    const junction = doc.diagnostics.find((d) => /forward-biased/.test(d.message));
    expect(junction).toMatchObject({ severity: "warning", line: 8 });
    // Round trip through JSON keeps the numbers (no NaN/Infinity in the document).
    expect(JSON.parse(JSON.stringify(doc))).toEqual(doc);
  });

  it("a point without a physical operating point makes ok false, no points, and an error naming the node", () => {
    const bad = `rail gnd = 0
rail vd = 1
rail vg = 0.5
nfet m gate=vg source=x drain=vd
inject push from=gnd to=x value=1n
`;
    const el = elaborate(bad);
    const run = solveNetwork(el.network!);
    const doc = toSolveJson(el.network, el.diagnostics, run, bad);
    expect(doc.ok).toBe(false);
    expect(doc.points).toEqual([]);
    const err = doc.diagnostics.find((d) => d.severity === "error");
    expect(err?.message).toMatch(/no physical operating point.*node x/);
    expect(err?.line).toBe(4);
  });
});
