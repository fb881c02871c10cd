/**
 * A run split into ranges of its points (SolveOptions.range, what chunked
 * runs use) reports what the unsplit run reports: bit for bit on the linear
 * path (a range replays the points since the last factorisation, so the
 * superposition state is the same) and with mismatch (each sample draws from
 * its own stream); within Newton's tolerance on the Newton path (a range's
 * first point starts from the network's own start, not from the previous
 * range's last solution).
 */
import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";
import type { Network } from "../../src/lang/network";
import type { PointResult, RunResult } from "../../src/solver/results";
import { pointCount, solveNetwork } from "../../src/solver/sweep";

function network(text: string): Network {
  const r = elaborate(text);
  if (!r.network) throw new Error(r.diagnostics.map((d) => `${d.line}: ${d.message}`).join("\n"));
  return r.network;
}

/** The run solved in the given ranges (boundaries in run order), points concatenated. */
function inRanges(net: Network, cuts: number[]): { points: PointResult[]; runs: RunResult[] } {
  const bounds = [0, ...cuts, pointCount(net)];
  const runs = bounds.slice(1).map((end, k) => solveNetwork(net, { range: { start: bounds[k], end } }));
  return { points: runs.flatMap((r) => r.points), runs };
}

function expectIdentical(a: PointResult[], b: PointResult[]): void {
  expect(b.length).toBe(a.length);
  for (let k = 0; k < a.length; k++) {
    const p = a[k];
    const q = b[k];
    expect(q.index).toBe(p.index);
    expect(q.sample).toBe(p.sample);
    expect(q.params).toEqual(p.params);
    expect(q.ok).toBe(p.ok);
    expect(q.solver).toEqual(p.solver);
    expect(q.probes).toEqual(p.probes);
    // Bit for bit: the arrays' bytes.
    for (const key of ["voltages", "currents", "ic", "saturated", "railCurrents"] as const)
      expect(Buffer.from(q[key].buffer, q[key].byteOffset, q[key].byteLength)).toEqual(
        Buffer.from(p[key].buffer, p[key].byteOffset, p[key].byteLength),
      );
  }
}

/** A 6 × 6 diffuser grid with two injects swept inside a sweep of the lateral gate: factorisations shared by 12 points each. */
const twoSpots = `network spots
param vh = 0.7
param a = 1n
param b = 100p
rail gh = vh
rail gv = 0.6
rail vd = 1
rail gnd = 0
for i in 0..5 {
  for j in 0..5 {
    nfet o{i}_{j} gate=gv source=n{i}_{j} drain=vd
  }
}
for i in 0..5 {
  for j in 0..4 {
    nfet h{i}_{j} gate=gh source=n{i}_{j} drain=n{i}_{j+1}
    nfet v{j}_{i} gate=gh source=n{j}_{i} drain=n{j+1}_{i}
  }
}
inject s1 from=n2_2 to=gnd value=a
inject s2 from=n4_1 to=gnd value=b
probe centre = current(o2_2)
sweep vh values [0.68, 0.7, 0.72]
sweep a values [1n, 2n, 5n, 10n]
sweep b values [100p, 300p, 1n]
`;

describe("a run split into ranges", () => {
  it("linear: every point is bit for bit the unsplit run's, also inside a group that shares a factorisation", () => {
    const net = network(twoSpots);
    const whole = solveNetwork(net);
    expect(whole.ok).toBe(true);
    expect(whole.points.length).toBe(36);
    // The cuts fall inside factorisation groups (points 0–11, 12–23, 24–35), where points are superposed.
    expect(whole.points[5].solver.reusedFactor).toBe(true);
    expect(whole.points[17].solver.reusedFactor).toBe(true);
    for (const cuts of [[5], [1, 2, 3, 17, 30], [12, 24], [11, 13, 35]]) {
      const split = inRanges(net, cuts);
      expectIdentical(whole.points, split.points);
      for (const r of split.runs) expect(r.total).toBe(36);
    }
  });

  it("linear: a range reports its own progress and count, and a range beyond the run is empty", () => {
    const net = network(twoSpots);
    const seen: [number, number][] = [];
    const r = solveNetwork(net, { range: { start: 30, end: 99 }, onProgress: (d, t) => seen.push([d, t]) });
    expect(r.solved).toBe(6);
    expect(r.points.map((p) => p.index)).toEqual([30, 31, 32, 33, 34, 35]);
    expect(seen.at(-1)).toEqual([6, 6]);
    expect(solveNetwork(net, { range: { start: 40 } }).points).toEqual([]);
  });

  it("mismatch: samples and their summaries agree bit for bit whatever the split", () => {
    const net = network(`network divider_mc
param dv = 0
rail vdd = 1.8
rail gnd = 0
rail g1 = 0.7 + dv/2
rail g2 = 0.7 - dv/2
nfet m1 gate=g1 source=tail drain=vdd w=2u l=2u
nfet m2 gate=g2 source=tail drain=vdd w=2u l=2u
inject tailsink from=tail to=gnd value=20n
probe lnratio = log(current(m1) / current(m2))
sweep dv values [0, 10m, 20m]
mismatch runs 5 seed 7 avt 3.5m
`);
    const whole = solveNetwork(net);
    expect(whole.summaries.length).toBe(3);
    const split = inRanges(net, [5, 12]);
    expectIdentical(whole.points, split.points);
    // Grid points 0 and 1 lie whole in the first two ranges; grid point 2 is split, so no range summarises it.
    expect(split.runs.flatMap((r) => r.summaries)).toEqual(whole.summaries.slice(0, 2));
  });

  it("Newton: a range's first point starts afresh and agrees with the warm-started unsplit run within Newton's tolerance", () => {
    // A diode-connected nfet fed 10 nA mirrored into a drain swept over 12 values (gate on an internal node: Newton).
    const net = network(`network mirror
rail gnd = 0
param vo = 1
rail vout = vo
inject iin from=gnd to=x value=10n
nfet m1 gate=x source=gnd drain=x
nfet m2 gate=x source=gnd drain=vout w=4u
sweep vo from 0.05 to 1 points 12
`);
    const whole = solveNetwork(net);
    expect(whole.ok).toBe(true);
    expect(whole.method).toBe("newton");
    const split = inRanges(net, [4, 9]);
    expect(split.points.length).toBe(12);
    for (let k = 0; k < 12; k++) {
      const p = whole.points[k];
      const q = split.points[k];
      expect(q.index).toBe(k);
      expect(q.ok).toBe(true);
      // newton.ts stops when the last step moved no node more than 1e-9 V (STEP_TOL).
      for (let n = 0; n < p.voltages.length; n++) expect(Math.abs(q.voltages[n] - p.voltages[n])).toBeLessThan(1e-9);
      for (let d = 0; d < p.currents.length; d++)
        expect(Math.abs(q.currents[d] - p.currents[d])).toBeLessThan(1e-6 * Math.abs(p.currents[d]));
    }
  });
});
