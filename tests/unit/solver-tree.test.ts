/**
 * The forest fast path (src/solver/tree.ts: leaf-first elimination, no fill,
 * no general symbolic analysis) against the general path of the same solver
 * (ordering forced to amd: adjacency graph, etree, column counts, up-looking
 * Cholesky in the style of Davis, "Direct Methods for Sparse Linear Systems",
 * SIAM 2006). Voltages must agree to 1e-12 relative; networks with a cycle
 * or with parallel devices must take the general path.
 */
import { describe, expect, it } from "vitest";
import type { Network } from "../../src/lang/network";
import { NetworkText } from "../helpers/network-text";
import { solveNetwork } from "../../src/solver/sweep";
import { dedupeAdjacency } from "../../src/solver/sparse";
import { analyse, naturalHasNoFill } from "../../src/solver/symbolic";
import { leafFirstOrder } from "../../src/solver/tree";
import { natural } from "../../src/solver/order";

function lcg(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => {
    s = (s * 16807) % 2147483647;
    return (s - 1) / 2147483646;
  };
}

/** Rails, then internal nodes n0..n{count-1} each with an output nfet to vd and lateral nfets on `edges`. */
function network(count: number, edges: [number, number][], rnd: () => number, pfets = false): Network {
  const b = new NetworkText("t")
    .rail("gh", 0.7)
    .rail("gv", 0.6)
    .rail("vd", 1)
    .rail("gnd", 0)
    .rail("vdd", 1.8)
    .rail("gp", 1.2);
  for (let k = 0; k < count; k++) {
    const w = 1e-6 * (0.5 + rnd());
    if (pfets) b.pfet(`o${k}`, { gate: "gp", source: "vdd", drain: `n${k}`, well: "vdd", w });
    else b.nfet(`o${k}`, { gate: "gv", source: `n${k}`, drain: "vd", w });
  }
  edges.forEach(([a, c], e) => {
    const w = 1e-6 * (0.5 + rnd());
    if (pfets) b.pfet(`h${e}`, { gate: "gp", source: `n${a}`, drain: `n${c}`, well: "vdd", w });
    else b.nfet(`h${e}`, { gate: rnd() < 0.5 ? "gh" : "gv", source: `n${a}`, drain: `n${c}`, w });
  });
  b.inject("spot", { from: pfets ? "gnd" : `n${count >> 1}`, to: pfets ? `n${count >> 1}` : "gnd", value: 2e-9 });
  b.inject("spot2", { from: pfets ? "gnd" : "n0", to: pfets ? "n0" : "gnd", value: 1e-10 });
  return b.build();
}

function solveBoth(net: Network): { fast: Float64Array; general: Float64Array; ordering: string } {
  const a = solveNetwork(net);
  const g = solveNetwork(net, { ordering: "amd" });
  expect(a.ok).toBe(true);
  expect(g.ok).toBe(true);
  return { fast: a.points[0].voltages, general: g.points[0].voltages, ordering: a.points[0].solver.ordering ?? "" };
}

function expectClose(x: Float64Array, y: Float64Array): void {
  for (let k = 0; k < x.length; k++)
    expect(Math.abs(x[k] - y[k])).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(y[k]), 1e-300));
}

describe("leafFirstOrder", () => {
  it("peels a path from both ends, parents eliminated after children", () => {
    const n = 6;
    const deg = new Int32Array(n);
    const x = new Int32Array(n);
    for (let k = 0; k + 1 < n; k++) {
      deg[k]++;
      deg[k + 1]++;
      x[k] ^= k + 1;
      x[k + 1] ^= k;
    }
    const f = leafFirstOrder(n, deg, x);
    expect(f).not.toBeNull();
    const { perm, pinv, parent } = f as NonNullable<typeof f>;
    expect(Array.from(perm).sort()).toEqual([0, 1, 2, 3, 4, 5]);
    let roots = 0;
    for (let k = 0; k < n; k++) {
      expect(pinv[perm[k]]).toBe(k);
      if (parent[k] < 0) roots++;
      else {
        expect(parent[k]).toBeGreaterThan(k);
        expect(Math.abs(perm[parent[k]] - perm[k])).toBe(1);
      }
    }
    expect(roots).toBe(1);
  });

  it("returns null for a cycle and for a repeated edge", () => {
    const tri = leafFirstOrder(3, new Int32Array([2, 2, 2]), new Int32Array([1 ^ 2, 0 ^ 2, 0 ^ 1]));
    expect(tri).toBeNull();
    const twice = leafFirstOrder(2, new Int32Array([2, 2]), new Int32Array([0, 0]));
    expect(twice).toBeNull();
  });
});

describe("forest fast path against the general path", () => {
  it("a chain of 200 n-channel nodes", () => {
    const rnd = lcg(3);
    const edges: [number, number][] = [];
    for (let k = 0; k + 1 < 200; k++) edges.push([k, k + 1]);
    const r = solveBoth(network(200, edges, rnd));
    expect(r.ordering).toBe("tree");
    expectClose(r.fast, r.general);
  });

  it("random trees and forests, both channel types", () => {
    for (let seed = 1; seed <= 12; seed++) {
      const rnd = lcg(seed);
      const n = 5 + Math.floor(rnd() * 120);
      const edges: [number, number][] = [];
      // Each node after the first joins an earlier one (a tree), sometimes not at all (a forest).
      for (let k = 1; k < n; k++)
        if (rnd() < 0.9) edges.push(rnd() < 0.5 ? [Math.floor(rnd() * k), k] : [k, Math.floor(rnd() * k)]);
      const r = solveBoth(network(n, edges, rnd, seed % 3 === 0));
      expect(r.ordering).toBe("tree");
      expectClose(r.fast, r.general);
    }
  });

  it("a network with a cycle takes the general path; parallel devices stay a forest (they sum into one entry)", () => {
    const rnd = lcg(9);
    const ring: [number, number][] = [];
    for (let k = 0; k < 30; k++) ring.push([k, (k + 1) % 30]);
    const a = solveNetwork(network(30, ring, rnd));
    expect(a.ok).toBe(true);
    expect(a.points[0].solver.ordering).not.toBe("tree");
    const g = solveNetwork(network(30, ring, lcg(9)), { ordering: "amd" });
    expectClose(a.points[0].voltages, g.points[0].voltages);
    // In node order (each node's only later neighbour is its parent) and in an
    // order the leaf peeling cannot take (a repeated edge): tree path, then general.
    for (const parallel of [
      [
        [0, 1],
        [1, 2],
        [1, 2],
        [2, 3],
      ],
      [
        [0, 1],
        [0, 2],
        [0, 2],
        [2, 3],
      ],
    ] as [number, number][][]) {
      const p = solveBoth(network(4, parallel, lcg(4)));
      expectClose(p.fast, p.general);
    }
    const natural = solveNetwork(
      network(
        4,
        [
          [0, 1],
          [1, 2],
          [1, 2],
          [2, 3],
        ],
        lcg(4),
      ),
    );
    expect(natural.points[0].solver.ordering).toBe("tree");
  });
});

describe("naturalHasNoFill", () => {
  /** Adjacency (both directions, deduplicated) of an edge list on n vertices. */
  function graph(n: number, edges: [number, number][]): { p: Int32Array; i: Int32Array } {
    const deg = new Int32Array(n);
    for (const [a, b] of edges) {
      deg[a]++;
      deg[b]++;
    }
    const p = new Int32Array(n + 1);
    for (let v = 0; v < n; v++) p[v + 1] = p[v] + deg[v];
    const at = p.slice(0, n);
    const idx = new Int32Array(p[n]);
    for (const [a, b] of edges) {
      idx[at[a]++] = b;
      idx[at[b]++] = a;
    }
    return dedupeAdjacency(n, p, idx);
  }

  it("agrees with the column counts of the natural-order analysis (no fill: nnz(L) = n + edges)", () => {
    const rnd = lcg(17);
    let withFill = 0;
    for (let trial = 0; trial < 200; trial++) {
      const n = 2 + Math.floor(rnd() * 14);
      const edges: [number, number][] = [];
      const count = Math.floor(rnd() * 2 * n);
      for (let e = 0; e < count; e++) {
        const a = Math.floor(rnd() * n);
        const b = Math.floor(rnd() * n);
        if (a !== b) edges.push([a, b]);
      }
      const g = graph(n, edges);
      const S = analyse(n, g.p, g.i, natural(n), { kernel: "simple" });
      const noFill = S.lnz === n + g.p[n] / 2;
      if (!noFill) withFill++;
      expect(naturalHasNoFill(n, g.p, g.i)).toBe(noFill);
    }
    expect(withFill).toBeGreaterThan(20);
  });

  const noFill = (g: { p: Int32Array; i: Int32Array }): boolean => naturalHasNoFill(g.p.length - 1, g.p, g.i);

  it("a triangle and a path have none; a 4-cycle in ring order has fill", () => {
    expect(
      noFill(
        graph(3, [
          [0, 1],
          [1, 2],
          [0, 2],
        ]),
      ),
    ).toBe(true);
    expect(
      noFill(
        graph(4, [
          [0, 1],
          [1, 2],
          [2, 3],
        ]),
      ),
    ).toBe(true);
    expect(
      noFill(
        graph(4, [
          [0, 1],
          [1, 2],
          [2, 3],
          [3, 0],
        ]),
      ),
    ).toBe(false);
  });
});

describe("iterative refinement", () => {
  it("one step leaves the voltages of a tree and of a mesh unchanged to 1e-12 relative (the direct solve is already accurate)", () => {
    const rnd = lcg(5);
    const tree: [number, number][] = [];
    for (let k = 1; k < 60; k++) tree.push([Math.floor(rnd() * k), k]);
    const ring: [number, number][] = [];
    for (let k = 0; k < 40; k++) ring.push([k, (k + 1) % 40], [k, (k + 7) % 40]);
    for (const [n, edges] of [
      [60, tree],
      [40, ring],
    ] as const) {
      const plain = solveNetwork(network(n, edges, lcg(n)));
      const refined = solveNetwork(network(n, edges, lcg(n)), { refine: 1 });
      expect(refined.ok).toBe(true);
      expectClose(refined.points[0].voltages, plain.points[0].voltages);
    }
  });
});
