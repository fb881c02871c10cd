/**
 * Sweep-aware comparison of two commits' runs (app/lib/review/compare-data.ts)
 * on the divider fixture, whose values are the weak-inversion closed form
 * (E. Vittoz, "Analog VLSI signal processing: why, where and how?", J. VLSI
 * Signal Processing 8, 1994 [confirmed]; docs/physics.md §3 Pseudo-voltages): m1 and m2 share the
 * pulled current iin in proportion to their widths, so widening m2 from 1 to
 * 2 µm moves i(m1) from iin/2 to iin/3 and i(m2) from iin/2 to 2·iin/3 (each
 * |Δ| = iin/6, largest at iin = 100 nA), the ratio from 1 to 1/2 at every
 * point, and the shared node x by U_T·ln(3/2) ≈ 10.5 mV (the drain term
 * exp(−1.8 V/U_T) is negligible) [derived]. Node y, m3 and the rails stay.
 */
import { afterEach, describe, expect, it } from "vitest";
import { seedDemo } from "@/scripts/seed/index";
import { analysisSummaries, comparisonPage, comparisonSeries } from "@/app/lib/review/compare-data";
import { freshDatabase } from "../helpers/db";
import { dividerHistory, SWEEP } from "../helpers/review-fixtures";

const UT = (1.380649e-23 * 300.15) / 1.602176634e-19;

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));
function history() {
  const t = freshDatabase();
  cleanups.push(t.dispose);
  seedDemo(t.db);
  return { db: t.db, ...dividerHistory(t.db) };
}

describe("sweep-aware comparison", () => {
  it("summarises each probe and each kind: largest |Δ|, largest relative Δ, where, and how many values moved", () => {
    const h = history();
    const [a] = analysisSummaries(h.first.id, h.second.id, {}, h.db);
    expect(a.analysis).toBe("sweep iin");
    expect(a.shape).toBe("sweep");
    expect(a.matchedPoints).toBe(3);
    expect(a.sweeps[0]).toMatchObject({ param: "iin", values: SWEEP });
    const ratio = a.probes.find((p) => p.name === "ratio")!;
    expect(ratio.maxAbs).toBeCloseTo(-0.5, 9);
    expect(ratio.maxRel).toBeCloseTo(-0.5, 9);
    expect(ratio.beyond).toBe(3);
    expect(a.kinds.map((k) => `${k.kind}/${k.quantity}`)).toEqual([
      "probe/value",
      "node/voltage",
      "device/current",
      "rail/current",
    ]);
    const nodes = a.kinds.find((k) => k.kind === "node")!;
    expect(nodes).toMatchObject({ entities: 5, moved: 1, beyond: 3, compared: 15 });
    expect(nodes.top!.name).toBe("x");
    expect(nodes.top!.maxAbs).toBeCloseTo(UT * Math.log(3 / 2), 9);
    const devices = a.kinds.find((k) => k.kind === "device" && k.quantity === "current")!;
    expect(devices.moved).toBe(2);
    expect(Math.abs(devices.top!.maxAbs)).toBeCloseTo(100e-9 / 6, 18);
    // where: at the largest pulled current, with the swept value named
    expect(devices.top!.absAt!.params).toEqual([{ name: "iin", value: 100e-9, unit: null }]);
    expect(["m1", "m2"]).toContain(devices.topRel!.name); // −1/3 and +1/3: equal magnitude
    expect(Math.abs(devices.topRel!.maxRel)).toBeCloseTo(1 / 3, 9);
  });

  it("pages through a kind's entities sorted by |Δ| on the server", () => {
    const h = history();
    const page0 = comparisonPage(h.first.id, h.second.id, "sweep iin", "node", "voltage", { size: 2 }, h.db)!;
    expect(page0.total).toBe(5);
    expect(page0.rows.map((r) => r.name)[0]).toBe("x");
    expect(page0.rows).toHaveLength(2);
    const last = comparisonPage(h.first.id, h.second.id, "sweep iin", "node", "voltage", { size: 2, page: 2 }, h.db)!;
    expect(last.rows).toHaveLength(1);
    const moved = comparisonPage(h.first.id, h.second.id, "sweep iin", "device", "current", { only: true }, h.db)!;
    expect(moved.rows.map((r) => r.name).sort()).toEqual(["m1", "m2"]);
    const byName = comparisonPage(h.first.id, h.second.id, "sweep iin", "rail", "current", { sort: "name" }, h.db)!;
    expect(byName.rows.map((r) => r.name)).toEqual(["gnd", "vdd", "vg"]);
    // a page past the end is the last page; an unknown analysis is null
    expect(
      comparisonPage(h.first.id, h.second.id, "sweep iin", "node", "voltage", { size: 2, page: 99 }, h.db)!.page,
    ).toBe(2);
    expect(comparisonPage(h.first.id, h.second.id, "nope", "node", "voltage", {}, h.db)).toBeNull();
  });

  it("sends both runs' probe series and the relative change per matched point", () => {
    const h = history();
    const s = comparisonSeries(h.first.id, h.second.id, "sweep iin", 0, h.db)!;
    expect(s.from.probes[0].values).toHaveLength(3);
    s.from.probes[0].values.forEach((v) => expect(v).toBeCloseTo(1, 9));
    s.to.probes[0].values.forEach((v) => expect(v).toBeCloseTo(0.5, 9));
    s.relative[0].forEach((r) => expect(r).toBeCloseTo(-0.5, 9));
    expect(s.distributions).toBeUndefined();
    // only the probes asked for are sent (the page plots a few at a time), with every name beside them
    expect(s.names).toEqual(s.to.probes.map((p) => p.name));
    const one = comparisonSeries(h.first.id, h.second.id, "sweep iin", 0, h.db, [s.names[0]])!;
    expect(one.names).toEqual(s.names);
    expect(one.to.probes.map((p) => p.name)).toEqual([s.names[0]]);
    expect(one.from.probes.map((p) => p.name)).toEqual([s.names[0]]);
    expect(one.relative).toEqual([s.relative[0]]);
    const none = comparisonSeries(h.first.id, h.second.id, "sweep iin", 0, h.db, ["no_such_probe"])!;
    expect(none.to.probes).toEqual([]);
    expect(none.relative).toEqual([]);
  });
});
