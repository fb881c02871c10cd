/**
 * Nested dissection on the graphs it meets (grids of the diffuser networks)
 * and on the ones it must survive (disconnected, paths, stars, trees, random
 * sparse graphs, cliques): always a permutation, fill bounded on a fixed grid
 * whatever the vertex numbering, no fill at all on trees.
 */
import { describe, expect, it } from "vitest";
import { nestedDissection } from "../../src/solver/order";
import { analyse } from "../../src/solver/symbolic";

interface Graph {
  n: number;
  ap: Int32Array;
  ai: Int32Array;
}

/** A small deterministic generator: Park–Miller minimal standard. */
function lcg(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => {
    s = (s * 16807) % 2147483647;
    return (s - 1) / 2147483646;
  };
}

/** Adjacency (both directions, no self loops, no repeats) of an edge list. */
function graph(n: number, edges: [number, number][]): Graph {
  const sets: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
  for (const [a, b] of edges) {
    if (a === b) continue;
    sets[a].add(b);
    sets[b].add(a);
  }
  const ap = new Int32Array(n + 1);
  const ai: number[] = [];
  for (let v = 0; v < n; v++) {
    for (const u of sets[v]) ai.push(u);
    ap[v + 1] = ai.length;
  }
  return { n, ap, ai: Int32Array.from(ai) };
}

/** The 5-point kx × ky grid, vertex x + kx·y, from vertex `base` on. */
function gridEdges(kx: number, ky: number, base = 0): [number, number][] {
  const edges: [number, number][] = [];
  for (let y = 0; y < ky; y++)
    for (let x = 0; x < kx; x++) {
      const v = base + y * kx + x;
      if (x + 1 < kx) edges.push([v, v + 1]);
      if (y + 1 < ky) edges.push([v, v + kx]);
    }
  return edges;
}

/** The same graph with vertex v renamed to label[v], for a random permutation `label`. */
function relabel(g: Graph, rnd: () => number): Graph {
  const label = Array.from({ length: g.n }, (_, k) => k);
  for (let k = g.n - 1; k > 0; k--) {
    const j = Math.floor(rnd() * (k + 1));
    [label[k], label[j]] = [label[j], label[k]];
  }
  const edges: [number, number][] = [];
  for (let v = 0; v < g.n; v++) for (let q = g.ap[v]; q < g.ap[v + 1]; q++) edges.push([label[v], label[g.ai[q]]]);
  return graph(g.n, edges);
}

function expectPermutation(n: number, perm: Int32Array): void {
  expect(perm.length).toBe(n);
  const seen = new Uint8Array(n);
  for (const v of perm) {
    expect(v >= 0 && v < n).toBe(true);
    seen[v]++;
  }
  expect(seen.every((c) => c === 1)).toBe(true);
}

describe("nested dissection", () => {
  it("keeps the Cholesky work of the 64² grid within 3% of the level-structure baseline, in any numbering", () => {
    // Baseline: Σ column count² = 2.1663e6 (lnz 66 807) for the ordering this
    // one replaced; a straight-cut dissection is well above it.
    const g = graph(64 * 64, gridEdges(64, 64));
    for (const h of [g, relabel(g, lcg(5)), relabel(g, lcg(17))]) {
      const perm = nestedDissection(h.n, h.ap, h.ai);
      expectPermutation(h.n, perm);
      const S = analyse(h.n, h.ap, h.ai, perm);
      expect(S.flops).toBeLessThan(1.03 * 2.1663e6);
      expect(S.lnz).toBeLessThan(1.03 * 66807);
    }
  });

  it("orders trees and forests without fill", () => {
    const rnd = lcg(3);
    const edges: [number, number][] = [];
    for (let v = 1; v < 3000; v++) edges.push([v, Math.floor(rnd() * v)]); // random tree
    for (let v = 3001; v < 4000; v++) edges.push([v, 3000 + ((v - 3001) >> 1)]); // binary tree
    for (let v = 4000; v < 4999; v++) edges.push([v, v + 1]); // path
    for (let v = 5001; v < 6000; v++) edges.push([5000, v]); // star
    const g = graph(6000, edges);
    const perm = nestedDissection(g.n, g.ap, g.ai);
    expectPermutation(g.n, perm);
    // A forest of c trees: lnz = n + (n − c), nothing beyond the edges.
    expect(analyse(g.n, g.ap, g.ai, perm).lnz).toBe(g.n + edges.length);
  });

  it("handles disconnected graphs: components, isolated vertices, a grid split in two", () => {
    const edges = [...gridEdges(30, 30), ...gridEdges(30, 30, 900)];
    for (let v = 1800; v < 1900; v++) edges.push([v, v === 1899 ? 1800 : v + 1]); // a cycle
    const g = graph(2000, edges); // vertices 1900..1999 isolated
    const perm = nestedDissection(g.n, g.ap, g.ai);
    expectPermutation(g.n, perm);
    const single = graph(900, gridEdges(30, 30));
    const one = analyse(single.n, single.ap, single.ai, nestedDissection(single.n, single.ap, single.ai)).lnz;
    // Components are ordered apart: no fill between them, about twice one grid.
    expect(analyse(g.n, g.ap, g.ai, perm).lnz).toBeLessThan(2 * one * 1.1 + 3 * 100);
  });

  it("returns a permutation on random sparse graphs, cliques and every leaf size and refinement count", () => {
    const rnd = lcg(11);
    const cases: Graph[] = [graph(0, []), graph(1, []), graph(2, [[0, 1]])];
    for (const [n, m] of [
      [50, 40],
      [300, 900],
      [2000, 6000],
      [2000, 1500],
    ]) {
      const edges: [number, number][] = [];
      for (let e = 0; e < m; e++) edges.push([Math.floor(rnd() * n), Math.floor(rnd() * n)]);
      cases.push(graph(n, edges));
    }
    const clique: [number, number][] = [];
    for (let a = 0; a < 40; a++) for (let b = a + 1; b < 40; b++) clique.push([a, b]);
    cases.push(graph(40, clique));
    cases.push(graph(20 * 20, gridEdges(20, 20)));
    for (const g of cases)
      for (const [leaf, maxIter] of [
        [16, 1],
        [0, 1],
        [1, 0],
        [5, 3],
        [10000, 1],
      ])
        expectPermutation(g.n, nestedDissection(g.n, g.ap, g.ai, leaf, maxIter));
  });

  it("returns a permutation on a random graph of average degree 6 (an expander: wide levels, pendant vertices)", () => {
    const rnd = lcg(29);
    const n = 20000;
    const edges: [number, number][] = [];
    for (let e = 0; e < 3 * n; e++) edges.push([Math.floor(rnd() * n), Math.floor(rnd() * n)]);
    const g = graph(n, edges);
    const perm = nestedDissection(g.n, g.ap, g.ai);
    expectPermutation(g.n, perm);
  });
});
