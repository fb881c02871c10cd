/**
 * The sparse direct solvers against an independent reference: math.js
 * `lusolve` (dense LU with partial pivoting, a general-purpose library), and
 * the scaled residual ‖Ax − b‖∞ / (‖A‖₁‖x‖∞ + ‖b‖∞) used by sparse-solver test
 * suites (common practice).
 */
import { lusolve } from "mathjs";
import { describe, expect, it } from "vitest";
import { cholesky, matrixTriangle } from "../../src/solver/cholesky";
import { lu, luSolve } from "../../src/solver/lu";
import { analyseLu, factorLu, solveLu } from "../../src/solver/lu-supernodal";
import { amd, nestedDissection, natural } from "../../src/solver/order";
import { compressPattern, type Csc, symmetricAdjacency } from "../../src/solver/sparse";
import { analyse, etreeOfGraph, type Kernel } from "../../src/solver/symbolic";
import { cholSolve, compress, multiply, permutedTriangle, transpose, Triplet } from "../helpers/sparse";

/** A small deterministic generator (not the mismatch PRNG): Park–Miller minimal standard. */
function lcg(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => {
    s = (s * 16807) % 2147483647;
    return (s - 1) / 2147483646;
  };
}

/** A weighted graph Laplacian under construction (full symmetric storage); `finish` adds a positive diagonal. */
class Laplacian {
  private readonly T: Triplet;
  private readonly diag: Float64Array;
  constructor(private readonly n: number) {
    this.T = new Triplet(n, n);
    this.diag = new Float64Array(n);
  }
  link(a: number, b: number, g: number): void {
    this.T.push(a, b, -g);
    this.T.push(b, a, -g);
    this.diag[a] += g;
    this.diag[b] += g;
  }
  finish(extra: () => number): Csc {
    for (let k = 0; k < this.n; k++) this.T.push(k, k, this.diag[k] + extra());
    return compress(this.T);
  }
}

/** Random SPD matrix: a weighted graph Laplacian plus a positive diagonal (full symmetric storage). */
function randomSpd(n: number, edges: number, rnd: () => number): Csc {
  const L = new Laplacian(n);
  for (let e = 0; e < edges; e++) {
    const a = Math.floor(rnd() * n);
    const b = Math.floor(rnd() * n);
    if (a !== b) L.link(a, b, Math.exp(8 * (rnd() - 0.5)));
  }
  return L.finish(() => 0.01 + rnd());
}

function dense(A: Csc): number[][] {
  const D = Array.from({ length: A.m }, () => new Array<number>(A.n).fill(0));
  for (let j = 0; j < A.n; j++) for (let p = A.p[j]; p < A.p[j + 1]; p++) D[A.i[p]][j] += (A.x as Float64Array)[p];
  return D;
}

function scaledResidual(A: Csc, x: Float64Array, b: Float64Array): number {
  const r = new Float64Array(A.m);
  multiply(A, x, r);
  let rn = 0;
  let xn = 0;
  let bn = 0;
  let an = 0;
  for (let i = 0; i < A.m; i++) {
    rn = Math.max(rn, Math.abs(r[i] - b[i]));
    bn = Math.max(bn, Math.abs(b[i]));
  }
  for (let j = 0; j < A.n; j++) {
    xn = Math.max(xn, Math.abs(x[j]));
    let s = 0;
    for (let p = A.p[j]; p < A.p[j + 1]; p++) s += Math.abs((A.x as Float64Array)[p]);
    an = Math.max(an, s);
  }
  return rn / (an * xn + bn);
}

/**
 * A x = b for a random b with each kernel and the natural, AMD and nested
 * dissection orders: a scaled residual below 1e-14, and x equal to math.js
 * lusolve's (dense LU with partial pivoting) to 1e-10.
 */
function expectLikeLusolve(A: Csc, kernels: readonly Kernel[], rnd: () => number): void {
  const n = A.n;
  const adj = symmetricAdjacency(A);
  const b = Float64Array.from({ length: n }, () => rnd() - 0.5);
  const ref = (lusolve(dense(A), Array.from(b)) as number[][]).map((r) => r[0]);
  for (const kernel of kernels) {
    for (const order of [natural(n), amd(n, adj.p, adj.i), nestedDissection(n, adj.p, adj.i, 8)]) {
      const S = analyse(n, adj.p, adj.i, order, { kernel });
      const F = cholesky(permutedTriangle(A, S.pinv, matrixTriangle(S)), S);
      expect(F.ok).toBe(true);
      if (!F.ok) continue;
      const x = new Float64Array(n);
      cholSolve(F.factor, S.perm, b, x, new Float64Array(n));
      expect(scaledResidual(A, x, b)).toBeLessThan(1e-14);
      for (let i = 0; i < n; i++) expect(Math.abs(x[i] - ref[i])).toBeLessThan(1e-10 * Math.max(1, Math.abs(ref[i])));
    }
  }
}

function grid(k: number): Csc {
  const n = k * k;
  const T = new Triplet(n, n, 5 * n);
  for (let y = 0; y < k; y++)
    for (let x = 0; x < k; x++) {
      const v = y * k + x;
      T.push(v, v, 4.01);
      if (x + 1 < k) {
        T.push(v, v + 1, -1);
        T.push(v + 1, v, -1);
      }
      if (y + 1 < k) {
        T.push(v, v + k, -1);
        T.push(v + k, v, -1);
      }
    }
  return compress(T);
}

/** nnz(L) by brute-force symbolic elimination on a dense boolean matrix (for small n). */
function bruteForceLnz(A: Csc, perm: Int32Array): number {
  const n = A.n;
  const pinv = new Int32Array(n);
  for (let k = 0; k < n; k++) pinv[perm[k]] = k;
  const M = Array.from({ length: n }, () => new Uint8Array(n));
  for (let j = 0; j < n; j++) for (let p = A.p[j]; p < A.p[j + 1]; p++) M[pinv[A.i[p]]][pinv[j]] = 1;
  let lnz = 0;
  for (let k = 0; k < n; k++) {
    const below: number[] = [];
    for (let i = k + 1; i < n; i++) if (M[i][k]) below.push(i);
    lnz += 1 + below.length;
    for (const a of below) for (const b of below) M[a][b] = 1;
  }
  return lnz;
}

describe("sparse matrices", () => {
  it("compress sums duplicates and sorts rows; transpose round-trips", () => {
    const T = new Triplet(3, 3);
    T.push(2, 0, 1);
    T.push(0, 0, 2);
    T.push(2, 0, 3);
    T.push(1, 2, 5);
    const A = compress(T);
    expect(Array.from(A.p)).toEqual([0, 2, 2, 3]);
    expect(Array.from(A.i)).toEqual([0, 2, 1]);
    expect(Array.from(A.x as Float64Array)).toEqual([2, 4, 5]);
    const B = transpose(transpose(A));
    expect(Array.from(B.i)).toEqual(Array.from(A.i));
    expect(Array.from(B.x as Float64Array)).toEqual(Array.from(A.x as Float64Array));
  });

  it("compressPattern maps every pair to its merged entry", () => {
    const ti = Int32Array.from([1, 0, 1, 2, 0]);
    const tj = Int32Array.from([0, 0, 0, 2, 2]);
    const { C, map } = compressPattern(3, 3, ti, tj, 5);
    expect(Array.from(C.p)).toEqual([0, 2, 2, 4]);
    expect(Array.from(C.i)).toEqual([0, 1, 0, 2]);
    expect(Array.from(map)).toEqual([1, 0, 1, 3, 2]);
  });
});

describe("orderings and symbolic analysis", () => {
  it("AMD and nested dissection return permutations and cut the fill of a grid", () => {
    const A = grid(24);
    const adj = symmetricAdjacency(A);
    const n = A.n;
    const nat = analyse(n, adj.p, adj.i, natural(n)).lnz;
    for (const perm of [amd(n, adj.p, adj.i), nestedDissection(n, adj.p, adj.i, 16)]) {
      const seen = new Uint8Array(n);
      for (const v of perm) seen[v]++;
      expect(seen.every((c) => c === 1)).toBe(true);
      expect(analyse(n, adj.p, adj.i, perm).lnz).toBeLessThan(0.6 * nat);
    }
  });

  it("column counts equal a brute-force symbolic elimination", () => {
    const rnd = lcg(7);
    for (let trial = 0; trial < 20; trial++) {
      const n = 5 + Math.floor(rnd() * 40);
      const A = randomSpd(n, Math.floor(rnd() * 3 * n), rnd);
      const adj = symmetricAdjacency(A);
      for (const order of [natural(n), amd(n, adj.p, adj.i)]) {
        const S = analyse(n, adj.p, adj.i, order);
        expect(S.lnz).toBe(bruteForceLnz(A, S.perm));
        // The analysis postorders: every parent comes after its child.
        const parent = etreeOfGraph(n, adj.p, adj.i, S.perm, S.pinv);
        for (let j = 0; j < n; j++) if (parent[j] !== -1) expect(parent[j]).toBeGreaterThan(j);
      }
    }
  });
});

describe("Cholesky against math.js lusolve", () => {
  it("both kernels solve random SPD systems like the dense reference", () => {
    const rnd = lcg(11);
    for (let trial = 0; trial < 12; trial++) {
      const n = 10 + Math.floor(rnd() * 50);
      expectLikeLusolve(randomSpd(n, 2 * n, rnd), ["simple", "supernodal"], rnd);
    }
  });

  it("the supernodal kernel is exact on wide and irregular supernodes (every branch of its blocked kernels)", () => {
    // Banded matrices in natural order give supernodes as wide as the band
    // (1..19 columns: group remainders of 1–3 columns, descendants of ≤ 4 and
    // > 4 columns, rows that do and do not map to consecutive rows of their
    // target); dense cliques joined by random edges give irregular patterns.
    const rnd = lcg(23);
    const cases: Csc[] = [];
    for (const band of [1, 2, 3, 4, 5, 7, 9, 13, 19]) {
      const n = 40 + band * 3;
      const L = new Laplacian(n);
      for (let i = 0; i < n; i++)
        for (let j = i + 1; j <= Math.min(n - 1, i + band); j++) {
          if (rnd() < 0.15) continue; // a few holes: non-consecutive row patterns
          L.link(i, j, Math.exp(4 * (rnd() - 0.5)));
        }
      cases.push(L.finish(() => 0.05 + rnd()));
    }
    for (let trial = 0; trial < 4; trial++) {
      const n = 90;
      const L = new Laplacian(n);
      const link = (i: number, j: number) => L.link(i, j, Math.exp(4 * (rnd() - 0.5)));
      for (let start = 0; start < n;) {
        const size = 3 + Math.floor(rnd() * 15);
        for (let i = start; i < Math.min(n, start + size); i++)
          for (let j = i + 1; j < Math.min(n, start + size); j++) link(i, j);
        start += size;
      }
      for (let e = 0; e < n; e++) {
        const i = Math.floor(rnd() * n);
        const j = Math.floor(rnd() * n);
        if (i !== j) link(i, j);
      }
      cases.push(L.finish(() => 0.01 + rnd()));
    }
    for (const A of cases) expectLikeLusolve(A, ["supernodal"], rnd);
  });

  it("the supernodal kernel agrees with the simple one on a grid", () => {
    const A = grid(20);
    const n = A.n;
    const adj = symmetricAdjacency(A);
    const order = nestedDissection(n, adj.p, adj.i, 10);
    const b = Float64Array.from({ length: n }, (_, i) => Math.cos(i));
    const xs: Float64Array[] = [];
    for (const kernel of ["simple", "supernodal"] as const) {
      const S = analyse(n, adj.p, adj.i, order, { kernel });
      const F = cholesky(permutedTriangle(A, S.pinv, matrixTriangle(S)), S);
      if (!F.ok) throw new Error("not positive definite");
      const x = new Float64Array(n);
      cholSolve(F.factor, S.perm, b, x, new Float64Array(n));
      xs.push(x);
    }
    for (let i = 0; i < n; i++) expect(xs[1][i]).toBeCloseTo(xs[0][i], 12);
  });

  it("reports a non-positive pivot as a result, naming the column", () => {
    const T = new Triplet(2, 2);
    T.push(0, 0, 1);
    T.push(0, 1, 2);
    T.push(1, 0, 2);
    T.push(1, 1, 1);
    const A = compress(T);
    const adj = symmetricAdjacency(A);
    for (const kernel of ["simple", "supernodal"] as const) {
      const S = analyse(2, adj.p, adj.i, natural(2), { kernel });
      const F = cholesky(permutedTriangle(A, S.pinv, matrixTriangle(S)), S);
      expect(F.ok).toBe(false);
      if (!F.ok) expect(F.pivot).toBeLessThanOrEqual(0);
    }
  });
});

describe("sparse LU against math.js lusolve", () => {
  it("solves random unsymmetric systems, pivoting where the diagonal is small", () => {
    const rnd = lcg(5);
    for (let trial = 0; trial < 15; trial++) {
      const n = 4 + Math.floor(rnd() * 40);
      const T = new Triplet(n, n);
      for (let k = 0; k < n; k++) T.push(k, k, trial % 3 === 0 ? 1e-9 * rnd() : 1 + rnd());
      for (let e = 0; e < 3 * n; e++) T.push(Math.floor(rnd() * n), Math.floor(rnd() * n), rnd() - 0.5);
      // A permutation-like part keeps it nonsingular when the diagonal is tiny.
      for (let k = 0; k < n; k++) T.push(k, (k + 1) % n, 2 + rnd());
      const A = compress(T);
      const adj = symmetricAdjacency(A);
      const res = lu(A, amd(n, adj.p, adj.i));
      expect(res.ok).toBe(true);
      if (!res.ok) continue;
      const b = Float64Array.from({ length: n }, () => rnd() - 0.5);
      const x = new Float64Array(n);
      luSolve(res.factor, b, x, new Float64Array(n));
      const ref = (lusolve(dense(A), Array.from(b)) as number[][]).map((r) => r[0]);
      expect(scaledResidual(A, x, b)).toBeLessThan(1e-13);
      for (let i = 0; i < n; i++) expect(Math.abs(x[i] - ref[i])).toBeLessThan(1e-8 * Math.max(1, Math.abs(ref[i])));
    }
  });

  it("reports a singular matrix as a result", () => {
    const T = new Triplet(3, 3);
    T.push(0, 0, 1);
    T.push(1, 0, 1);
    T.push(2, 2, 1);
    const A = compress(T);
    expect(lu(A, natural(3)).ok).toBe(false);
  });
});

describe("supernodal LU (symmetric pattern) against math.js lusolve", () => {
  /**
   * A structurally symmetric matrix: `side` × `side` grid links plus `extra`
   * random ones, and cliques of 3–6 nodes chained by single links, with
   * independent values either way. With `tiny`, the first node of each clique
   * has a diagonal 1e-9 of the rest: its pivot must come from another row of
   * its clique's diagonal block.
   */
  function randomSymmetricPattern(side: number, extra: number, cliques: number, tiny: boolean, rnd: () => number): Csc {
    const sizes = Array.from({ length: cliques }, () => 3 + Math.floor(rnd() * 4));
    const n = side * side + sizes.reduce((a, b) => a + b, 0);
    const T = new Triplet(n, n);
    const link = (a: number, b: number) => {
      T.push(a, b, rnd() - 0.5);
      T.push(b, a, rnd() - 0.5);
    };
    for (let i = 0; i < side; i++)
      for (let j = 0; j < side; j++) {
        if (j + 1 < side) link(i * side + j, i * side + j + 1);
        if (i + 1 < side) link(i * side + j, (i + 1) * side + j);
      }
    for (let e = 0; e < extra; e++) {
      const a = Math.floor(rnd() * side * side);
      const b = Math.floor(rnd() * side * side);
      if (a !== b) link(a, b);
    }
    const firsts = new Set<number>();
    let at = side * side;
    for (const size of sizes) {
      for (let a = 0; a < size; a++) for (let b = a + 1; b < size; b++) link(at + a, at + b);
      if (at > side * side) T.push(at, at - 1, 0.01);
      firsts.add(at);
      at += size;
    }
    for (let k = 0; k < n; k++) T.push(k, k, tiny && firsts.has(k) ? 1e-9 * rnd() : 2 + rnd());
    return compress(T);
  }

  it("solves structurally symmetric systems like the dense reference, swapping rows inside diagonal blocks", () => {
    const rnd = lcg(11);
    let swapped = 0;
    for (const [side, extra, cliques, tiny, order] of [
      [6, 10, 0, false, "amd"],
      [9, 40, 3, true, "nd"],
      [12, 80, 5, true, "amd"],
      [14, 30, 8, true, "nd"],
      // Cliques alone in their own order: each tiny diagonal is the first pivot of its block.
      [0, 0, 6, true, "natural"],
    ] as const) {
      const A = randomSymmetricPattern(side, extra, cliques, tiny, rnd);
      const n = A.n;
      const adj = symmetricAdjacency(A);
      const q =
        order === "nd" ? nestedDissection(n, adj.p, adj.i) : order === "amd" ? amd(n, adj.p, adj.i) : natural(n);
      const F = analyseLu(A, adj.p, adj.i, q);
      expect(factorLu(F, A).ok).toBe(true);
      for (let j = 0; j < n; j++) if (F.piv[j] !== j) swapped++;
      const b = Float64Array.from({ length: n }, () => rnd() - 0.5);
      const x = new Float64Array(n);
      solveLu(F, b, x);
      const ref = (lusolve(dense(A), Array.from(b)) as number[][]).map((r) => r[0]);
      expect(scaledResidual(A, x, b)).toBeLessThan(1e-13);
      for (let i = 0; i < n; i++) expect(Math.abs(x[i] - ref[i])).toBeLessThan(1e-8 * Math.max(1, Math.abs(ref[i])));
      // Refactoring with new values in the same analysis gives the new solution.
      const B = { ...A, x: Float64Array.from(A.x as Float64Array, (v) => v * (1.5 + rnd())) };
      expect(factorLu(F, B).ok).toBe(true);
      solveLu(F, b, x);
      expect(scaledResidual(B, x, b)).toBeLessThan(1e-13);
    }
    expect(swapped).toBeGreaterThan(0);
  });

  it("reports a column whose block has no acceptable pivot (the caller falls back to partial pivoting)", () => {
    // A star: leaves 0..4 around centre 5, eliminated leaves first; leaf 0 (a block of its own) has a zero diagonal.
    const T = new Triplet(6, 6);
    for (let l = 0; l < 5; l++) {
      T.push(l, l, l === 0 ? 0 : 2);
      T.push(l, 5, 1);
      T.push(5, l, 1);
    }
    T.push(5, 5, 3);
    const A = compress(T);
    const adj = symmetricAdjacency(A);
    const F = analyseLu(A, adj.p, adj.i, natural(6));
    const res = factorLu(F, A);
    expect(res.ok).toBe(false);
    if (!res.ok) expect(res.column).toBe(0);
    // The general LU pivots across blocks and solves it like the dense reference.
    const g = lu(A, natural(6));
    expect(g.ok).toBe(true);
    if (!g.ok) return;
    const b = Float64Array.from([1, 2, 3, 4, 5, 6]);
    const x = new Float64Array(6);
    luSolve(g.factor, b, x, new Float64Array(6));
    const ref = (lusolve(dense(A), Array.from(b)) as number[][]).map((r) => r[0]);
    for (let i = 0; i < 6; i++) expect(x[i]).toBeCloseTo(ref[i], 12);
  });
});
