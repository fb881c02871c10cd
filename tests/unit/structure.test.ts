/**
 * The structure view's data (app/lib/structure.ts) and its drawing's layout
 * (app/ui/structure/graph-layout.ts): which devices touch which node, counted
 * by hand for a small chain; the layout places every device and internal
 * node once and leaves rails out (they become tags). Bookkeeping, no physics.
 */
import { describe, expect, it } from "vitest";
import { structureOf } from "@/app/lib/structure";
import { layoutGraph } from "@/app/ui/structure/graph-layout";
import { elaborate } from "@/src/lang";

const CHAIN = `network chain
rail vdd = 1.8
rail gnd = 0
rail gh = 0.7
for k in 0..2 {
  nfet lat{k} gate=gh source=x{k} drain=x{k+1}
}
for k in 0..3 {
  nfet out{k} gate=gh source=x{k} drain=vdd
}
inject light from=x0 to=gnd value=1n
`;

function net() {
  const r = elaborate(CHAIN);
  if (!r.network) throw new Error(r.diagnostics.map((d) => d.message).join("; "));
  return r.network;
}

describe("structure of a network", () => {
  it("lists each node's devices, its degree and whether it is a rail", () => {
    const s = structureOf(net());
    const x1 = s.nodes.rows.find((n) => n.name === "x1")!;
    // x1: drain of lat0, source of lat1, source of out1
    expect(x1).toMatchObject({ rail: false, degree: 3 });
    expect(x1.elements.sort()).toEqual(["lat0", "lat1", "out1"]);
    const x0 = s.nodes.rows.find((n) => n.name === "x0")!;
    expect(x0.elements.sort()).toEqual(["lat0", "light", "out0"]);
    expect(s.nodes.rows.find((n) => n.name === "vdd")).toMatchObject({ rail: true, degree: 4 });
    expect(s.nodes.rows.find((n) => n.name === "gh")).toMatchObject({ rail: true, degree: 7 });
    expect(s.devices.rows.find((d) => d.name === "lat1")).toEqual({
      name: "lat1",
      type: "nfet",
      gate: "gh",
      source: "x1",
      drain: "x2",
      bulk: "substrate",
    });
  });

  it("searches names and counts the matches", () => {
    const s = structureOf(net(), "x3");
    expect(s.nodes.rows.map((n) => n.name)).toEqual(["x3"]);
    expect(s.devices.rows.map((d) => d.name).sort()).toEqual(["lat2", "out3"]);
    expect(s.devices.matched).toBe(2);
    expect(s.devices.total).toBe(7);
  });

  it("lays the small graph out with every device and internal node once, rails as tags", () => {
    const s = structureOf(net());
    const g = layoutGraph(s.graph!);
    const devices = g.nodes.filter((n) => n.kind === "device");
    const nodes = g.nodes.filter((n) => n.kind === "node");
    expect(devices).toHaveLength(7);
    expect(nodes.map((n) => n.name).sort()).toEqual(["x0", "x1", "x2", "x3"]);
    expect(devices.find((d) => d.name === "out2")!.railTags).toEqual(["g gh", "d vdd"]);
    expect(g.edges.every((e) => e.points.every((p) => Number.isFinite(p.x) && Number.isFinite(p.y)))).toBe(true);
    // source → device → drain: along a chain the layers advance left to right
    const x = (name: string) => g.nodes.find((n) => n.name === name)!.x;
    expect(x("x0")).toBeLessThan(x("lat0"));
    expect(x("lat0")).toBeLessThan(x("x1"));
  });
});
