import { describe, expect, it } from "vitest";
import {
  diffResults,
  pointKey,
  relativeChange,
  summarize,
  tableFromPoints,
  within,
  type PointValues,
} from "@/app/lib/review/results-diff";

/**
 * Fixture: a two-device current divider (m1, m2 share source node x, drains on
 * rail vdd, gates on rail vg, input current `iin` pulled out of x) plus an
 * independent branch (m3 alone on node y with its own 5 nA), solved in closed
 * form from the weak-inversion law in pseudo-voltages (E. Vittoz, "Analog VLSI
 * signal processing: why, where and how?", J. VLSI Signal Processing 8, 1994
 * [confirmed]; docs/physics.md §2 Weak-inversion drain current, §3 Pseudo-voltages): device k carries
 * I_k = G_k·(u_x − u_d) with
 * G_k = I0·(W/L)_k·exp(κ·Vg/U_T) and u = exp(−V/U_T), so KCL at x gives
 * u_x = u_d + iin/(G1 + G2) and I1/I2 = (W/L)1/(W/L)2 [derived].
 */
const UT = (1.380649e-23 * 300.15) / 1.602176634e-19; // SI 2019 exact k and q [confirmed]
const I0 = 1e-15;
const KAPPA = 0.7;
const VG = 0.6;
const VDD = 1.8;

function solveDivider(w1: number, w2: number, iin: number, extra?: { name: string; w: number }): PointValues {
  const g = (w: number) => I0 * (w / 1e-6) * Math.exp((KAPPA * VG) / UT);
  const ud = Math.exp(-VDD / UT);
  const ux = ud + iin / (g(w1) + g(w2) + (extra ? g(extra.w) : 0));
  const uy = ud + 5e-9 / g(1e-6);
  const i = (w: number, u: number) => g(w) * (u - ud);
  const devices: PointValues["devices"] = {
    m1: { current: i(w1, ux), ic: null },
    m2: { current: i(w2, ux), ic: null },
    m3: { current: i(1e-6, uy), ic: null },
  };
  if (extra) devices[extra.name] = { current: i(extra.w, ux), ic: null };
  return {
    params: { iin },
    nodes: { x: -UT * Math.log(ux), y: -UT * Math.log(uy), vdd: VDD, vg: VG },
    rails: { vdd: iin + 5e-9, vg: 0 },
    devices,
    probes: { ratio: i(w1, ux) / i(w2, ux), total: iin },
  };
}

const sweep = [1e-9, 1e-8, 1e-7];
const run = (w2: number, extra?: { name: string; w: number }) =>
  tableFromPoints(
    "sweep iin",
    sweep.map((iin) => solveDivider(1e-6, w2, iin, extra)),
  );

describe("results diff", () => {
  it("the closed-form fixture splits the current by W/L (sanity of the fixture itself)", () => {
    const p = solveDivider(1e-6, 2e-6, 1e-8);
    expect(p.devices!.m1.current + p.devices!.m2.current).toBeCloseTo(1e-8, 20);
    expect(p.probes!.ratio).toBeCloseTo(0.5, 12);
  });

  it("a commit that changes one device width moves exactly node x, m1, m2 and the ratio probe", () => {
    const d = diffResults([run(1e-6)], [run(2e-6)]);
    const moved = [...new Set(d.rows.filter((r) => r.beyond).map((r) => `${r.kind}:${r.quantity}:${r.name}`))].sort();
    expect(moved).toEqual(["device:current:m1", "device:current:m2", "node:voltage:x", "probe:value:ratio"]);
    // 4 values at each of the 3 sweep points; nothing else moved.
    expect(d.beyond).toBe(12);
    expect(d.rows.every((r) => r.beyond)).toBe(true);
    // compared: per point 4 nodes + 2 rails + 3 devices + 2 probes = 11.
    expect(d.compared).toBe(33);
    expect(d.names).toEqual([]);
    expect(d.points).toEqual([]);
    // Doubling W2 at equal gate: I2 goes from iin/2 to 2·iin/3, I1 from iin/2 to iin/3 [derived].
    const m2 = d.rows.find((r) => r.name === "m2" && r.point === pointKey({ iin: 1e-8 }))!;
    expect(m2.from).toBeCloseTo(5e-9, 20);
    expect(m2.to).toBeCloseTo(2e-8 / 3, 20);
    expect(m2.rel).toBeCloseTo(1 / 3, 9);
    expect(m2.abs).toBeCloseTo(2e-8 / 3 - 5e-9, 20);
    // Node x moves by U_T·ln(3/2)·... : u_x scales by (1+1)/(1+2), so V_x rises by U_T·ln(3/2) [derived].
    const x = d.rows.find((r) => r.name === "x" && r.point === pointKey({ iin: 1e-8 }))!;
    expect(x.abs).toBeCloseTo(UT * Math.log(1.5), 6);
  });

  it("lists devices added and removed, and points only one side has", () => {
    const before = run(1e-6);
    const after = tableFromPoints(
      "sweep iin",
      [1e-9, 1e-8, 1e-6].map((iin) => solveDivider(1e-6, 1e-6, iin, { name: "m4", w: 1e-6 })),
    );
    const d = diffResults([before], [after]);
    expect(d.names).toEqual([{ kind: "device", added: ["m4"], removed: [] }]);
    expect(d.points).toEqual([
      { analysis: "sweep iin", added: [pointKey({ iin: 1e-6 })], removed: [pointKey({ iin: 1e-7 })] },
    ]);
    const back = diffResults([after], [before]);
    expect(back.names).toEqual([{ kind: "device", added: [], removed: ["m4"] }]);
  });

  it("matches analyses by name and lists the unmatched ones", () => {
    const op = tableFromPoints("operating point", [solveDivider(1e-6, 1e-6, 1e-8)]);
    const d = diffResults([run(1e-6), op], [run(1e-6)]);
    expect(d.analyses).toEqual({ matched: ["sweep iin"], added: [], removed: ["operating point"] });
    expect(d.beyond).toBe(0);
  });

  it("tolerances: 1 fA and 1e-6 relative by default, adjustable", () => {
    expect(within(1e-9, 1e-9 + 5e-16, 1e-15, 1e-6)).toBe(true); // below 1 fA + 1e-6·1 nA
    expect(within(1e-9, 1e-9 * (1 + 3e-6), 1e-15, 1e-6)).toBe(false); // 3e-15 > 1e-15 + 1e-6·1 nA
    expect(within(NaN, NaN, 0, 0)).toBe(true);
    expect(within(NaN, 1, 1, 1)).toBe(false);
    const a = tableFromPoints("op", [{ params: {}, nodes: { x: 0.3 }, devices: { m: { current: 1e-9 } } }]);
    const b = tableFromPoints("op", [
      { params: {}, nodes: { x: 0.3 + 5e-7 }, devices: { m: { current: 1e-9 * (1 + 1e-5) } } },
    ]);
    const loose = diffResults([a], [b]);
    expect(loose.rows.map((r) => r.name)).toEqual(["m"]); // 0.5 µV is within 1 µV; 1e-5 relative is not within 1e-6
    const tight = diffResults([a], [b], { tolerance: { absVoltage: 1e-7, rel: 1e-9 } });
    expect(tight.rows.map((r) => r.name).sort()).toEqual(["m", "x"]);
    const wide = diffResults([a], [b], { tolerance: { rel: 1e-4 } });
    expect(wide.beyond).toBe(0);
    expect(diffResults([a], [b], { includeWithin: true }).rows).toHaveLength(2);
  });

  it("relative change from zero is infinite, and limits keep counts exact", () => {
    expect(relativeChange(0, 1)).toBe(Infinity);
    expect(relativeChange(0, 0)).toBe(0);
    expect(relativeChange(2, 1)).toBe(-0.5);
    const d = diffResults([run(1e-6)], [run(2e-6)], { limit: 5 });
    expect(d.rows).toHaveLength(5);
    expect(d.truncated).toBe(true);
    expect(d.beyond).toBe(12);
    expect(summarize(diffResults([run(1e-6)], [run(2e-6)])).names.sort()).toEqual(["m1", "m2", "ratio", "x"]);
  });
});
