/**
 * Numeric Cholesky factorisation C = L·Lᵀ into the pattern fixed by the
 * symbolic analysis. Two kernels share one contract:
 *
 * - "simple" (up-looking: row k of L is a sparse triangular solve with the rows
 *   above it) for factors with little dense work, e.g. chains and trees;
 *   its input is the UPPER triangle of C (column j holds rows i ≤ j).
 * - "supernodal" (left-looking over fundamental supernodes: dense rank-k
 *   updates from descendant supernodes, then a dense panel factorisation) for
 *   meshes, where most of the work sits in a few dense blocks; its input is
 *   the LOWER triangle of C (column j holds rows i ≥ j).
 *
 * `matrixTriangle(S)` says which triangle a Symbolic wants. A non-positive
 * pivot is a result (`ok: false` with the permuted column), not a throw.
 */

import type { Csc } from "./sparse";
import type { Supernodes, Symbolic } from "./symbolic";

export interface Factor {
  n: number;
  kernel: "simple" | "supernodal";
  /** Simple kernel: L in compressed columns (diagonal first); empty for supernodal. */
  lp: Int32Array;
  li: Int32Array;
  /** Simple kernel: values of L by column; supernodal: the dense supernode blocks. */
  lx: Float64Array;
  supernodes: Supernodes | null;
}

export type FactorResult =
  | { ok: true; factor: Factor }
  /** `column` is the permuted column whose pivot was `pivot` ≤ 0 (or not finite). */
  | { ok: false; column: number; pivot: number };

/** Which triangle of C the kernel of S reads. */
export function matrixTriangle(S: Symbolic): "upper" | "lower" {
  return S.kernel === "simple" ? "upper" : "lower";
}

/** Workspace for repeated factorisations with the same Symbolic. */
export interface CholeskyWork {
  x: Float64Array;
  stack: Int32Array;
  mark: Int32Array;
  next: Int32Array;
  update: Float64Array;
  link: Int32Array;
  head: Int32Array;
}

export function choleskyWork(S: Symbolic): CholeskyWork {
  const n = S.n;
  const sn = S.supernodes;
  return {
    x: new Float64Array(n),
    stack: new Int32Array(n),
    mark: new Int32Array(n),
    next: new Int32Array(sn ? sn.count : n),
    update: new Float64Array(sn ? sn.maxBlock : 0),
    link: new Int32Array(sn ? sn.count : 0),
    head: new Int32Array(sn ? sn.count : 0),
  };
}

/**
 * L = chol(C) with the pattern of S. `into` (a factor of the same Symbolic) is
 * overwritten instead of allocating new arrays.
 */
export function cholesky(C: Csc, S: Symbolic, into?: Factor, work?: CholeskyWork): FactorResult {
  const w = work ?? choleskyWork(S);
  return S.kernel === "simple" ? upLooking(C, S, w, into) : supernodal(C, S, w, into);
}

function upLooking(C: Csc, S: Symbolic, w: CholeskyWork, into?: Factor): FactorResult {
  const n = S.n;
  const lp = S.lp;
  const parent = S.parent;
  const li = into ? into.li : new Int32Array(S.lnz);
  const lx = into ? into.lx : new Float64Array(S.lnz);
  const { x, stack, mark } = w;
  // next[j]: next free slot in column j of L.
  const next = w.next;
  const cp = C.p;
  const ci = C.i;
  const cx = C.x as Float64Array;
  mark.fill(-1);
  for (let j = 0; j < n; j++) next[j] = lp[j];
  for (let k = 0; k < n; k++) {
    // Pattern of row k of L: the elimination-tree paths from each i < k with
    // C(i, k) ≠ 0, stacked in topological order in stack[top..n).
    let top = n;
    mark[k] = k;
    x[k] = 0;
    for (let p = cp[k]; p < cp[k + 1]; p++) {
      let i = ci[p];
      if (i > k) continue;
      x[i] += cx[p];
      let len = 0;
      while (mark[i] !== k) {
        stack[len++] = i;
        mark[i] = k;
        i = parent[i];
      }
      while (len > 0) stack[--top] = stack[--len];
    }
    // x = L(0:k-1, 0:k-1) \ C(0:k-1, k); d = C(k,k) - ‖L(k, 0:k-1)‖².
    let d = x[k];
    x[k] = 0;
    for (; top < n; top++) {
      const i = stack[top];
      const lki = x[i] / lx[lp[i]];
      x[i] = 0;
      const end = next[i];
      for (let p = lp[i] + 1; p < end; p++) x[li[p]] -= lx[p] * lki;
      d -= lki * lki;
      li[end] = k;
      lx[end] = lki;
      next[i] = end + 1;
    }
    // The row solve leaves x all zero again, so a failure needs no cleanup.
    if (!(d > 0) || d === Infinity) return { ok: false, column: k, pivot: d };
    const p = next[k]++;
    li[p] = k;
    lx[p] = Math.sqrt(d);
  }
  return { ok: true, factor: { n, kernel: "simple", lp, li, lx, supernodes: null } };
}

function supernodal(C: Csc, S: Symbolic, w: CholeskyWork, into?: Factor): FactorResult {
  const sn = S.supernodes as Supernodes;
  const { count: ns, start, of, rowPtr, rows, valPtr } = sn;
  const lx = into ? into.lx : new Float64Array(sn.values);
  const rel = w.mark;
  const relMap = w.stack;
  const U = w.update;
  const ptr = w.next;
  const link = w.link;
  const head = w.head;
  const cp = C.p;
  const ci = C.i;
  const cx = C.x as Float64Array;
  head.fill(-1);
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const l = start[s + 1];
    const k = l - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    for (let t = 0; t < nr; t++) rel[rows[r0 + t]] = t;
    lx.fill(0, v0, v0 + nr * k);
    // Block = C(rows, f:l), lower triangle.
    for (let j = f; j < l; j++) {
      const col = v0 + (j - f) * nr;
      for (let p = cp[j]; p < cp[j + 1]; p++) lx[col + rel[ci[p]]] += cx[p];
    }
    // Block -= L(rows, d) · L(f:l, d)ᵀ for every descendant supernode d with rows in f:l.
    let d = head[s];
    head[s] = -1;
    while (d !== -1) {
      const dnext = link[d];
      const kd = start[d + 1] - start[d];
      const rd0 = rowPtr[d];
      const nrd = rowPtr[d + 1] - rd0;
      const vd0 = valPtr[d];
      const p0 = ptr[d];
      let p1 = p0;
      while (p1 < nrd && rows[rd0 + p1] < l) p1++;
      const m1 = p1 - p0;
      const mu = nrd - p0;
      // Positions of d's rows p0.. inside s's block, once per update.
      for (let r = 0; r < mu; r++) relMap[r] = rel[rows[rd0 + p0 + r]];
      if (kd <= 2) {
        // Few columns: subtract the products straight into the block.
        for (let t = 0; t < kd; t++) {
          const base = vd0 + t * nrd + p0;
          for (let c = 0; c < m1; c++) {
            const lc = lx[base + c];
            if (lc === 0) continue;
            const dst = v0 + (rows[rd0 + p0 + c] - f) * nr;
            for (let r = c; r < mu; r++) lx[dst + relMap[r]] -= lx[base + r] * lc;
          }
        }
      } else {
        // U (mu × m1, lower part) = Ld(p0:nrd, :) · Ld(p0:p1, :)ᵀ, four columns of Ld at a time.
        U.fill(0, 0, mu * m1);
        let t = 0;
        for (; t + 4 <= kd; t += 4) {
          const b0 = vd0 + t * nrd + p0;
          const b1 = b0 + nrd;
          const b2 = b1 + nrd;
          const b3 = b2 + nrd;
          let c = 0;
          for (; c + 2 <= m1; c += 2) {
            // Two columns of U share the loads of Ld.
            const l0 = lx[b0 + c];
            const l1 = lx[b1 + c];
            const l2 = lx[b2 + c];
            const l3 = lx[b3 + c];
            const m0 = lx[b0 + c + 1];
            const m1c = lx[b1 + c + 1];
            const m2 = lx[b2 + c + 1];
            const m3 = lx[b3 + c + 1];
            const uc = c * mu;
            const ud = uc + mu;
            U[uc + c] += lx[b0 + c] * l0 + lx[b1 + c] * l1 + lx[b2 + c] * l2 + lx[b3 + c] * l3;
            for (let r = c + 1; r < mu; r++) {
              const x0 = lx[b0 + r];
              const x1 = lx[b1 + r];
              const x2 = lx[b2 + r];
              const x3 = lx[b3 + r];
              U[uc + r] += x0 * l0 + x1 * l1 + x2 * l2 + x3 * l3;
              U[ud + r] += x0 * m0 + x1 * m1c + x2 * m2 + x3 * m3;
            }
          }
          for (; c < m1; c++) {
            const l0 = lx[b0 + c];
            const l1 = lx[b1 + c];
            const l2 = lx[b2 + c];
            const l3 = lx[b3 + c];
            const uc = c * mu;
            for (let r = c; r < mu; r++) U[uc + r] += lx[b0 + r] * l0 + lx[b1 + r] * l1 + lx[b2 + r] * l2 + lx[b3 + r] * l3;
          }
        }
        for (; t < kd; t++) {
          const base = vd0 + t * nrd + p0;
          for (let c = 0; c < m1; c++) {
            const lc = lx[base + c];
            if (lc === 0) continue;
            const uc = c * mu;
            for (let r = c; r < mu; r++) U[uc + r] += lx[base + r] * lc;
          }
        }
        for (let c = 0; c < m1; c++) {
          const dst = v0 + (rows[rd0 + p0 + c] - f) * nr;
          const uc = c * mu;
          for (let r = c; r < mu; r++) lx[dst + relMap[r]] -= U[uc + r];
        }
      }
      ptr[d] = p1;
      if (p1 < nrd) {
        const target = of[rows[rd0 + p1]];
        link[d] = head[target];
        head[target] = d;
      }
      d = dnext;
    }
    // Dense panel Cholesky of the nr × k block (left-looking inside the panel,
    // earlier columns applied four at a time).
    for (let c = 0; c < k; c++) {
      const col = v0 + c * nr;
      let t = 0;
      for (; t + 4 <= c; t += 4) {
        const a0 = v0 + t * nr;
        const a1 = a0 + nr;
        const a2 = a1 + nr;
        const a3 = a2 + nr;
        const l0 = lx[a0 + c];
        const l1 = lx[a1 + c];
        const l2 = lx[a2 + c];
        const l3 = lx[a3 + c];
        for (let r = c; r < nr; r++) lx[col + r] -= lx[a0 + r] * l0 + lx[a1 + r] * l1 + lx[a2 + r] * l2 + lx[a3 + r] * l3;
      }
      for (; t < c; t++) {
        const a0 = v0 + t * nr;
        const l0 = lx[a0 + c];
        if (l0 === 0) continue;
        for (let r = c; r < nr; r++) lx[col + r] -= lx[a0 + r] * l0;
      }
      const piv = lx[col + c];
      if (!(piv > 0) || piv === Infinity) return { ok: false, column: f + c, pivot: piv };
      const ljj = Math.sqrt(piv);
      lx[col + c] = ljj;
      const inv = 1 / ljj;
      for (let r = c + 1; r < nr; r++) lx[col + r] *= inv;
    }
    if (nr > k) {
      ptr[s] = k;
      const target = of[rows[r0 + k]];
      link[s] = head[target];
      head[target] = s;
    }
  }
  const empty = new Int32Array(0);
  return { ok: true, factor: { n: S.n, kernel: "supernodal", lp: empty, li: empty, lx, supernodes: sn } };
}
