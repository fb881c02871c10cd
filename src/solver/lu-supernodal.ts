/**
 * Supernodal LU of a matrix whose pattern is symmetric (Newton's Jacobian:
 * a device's terminals couple both ways), in the structure of the symbolic
 * Cholesky analysis of that pattern (symbolic.ts): with a fill-reducing
 * order of A + Aᵀ, the pattern of L is the Cholesky factor's and that of U
 * its transpose, so the analysis, the supernodes and the left-looking update
 * schedule (cholesky.ts `updateSchedule`) are built once per Newton plan and
 * every iteration only fills numbers in:
 *
 *   P·A·Pᵀ = L·U      L unit lower, U upper; L and Uᵀ stored alike, by supernode
 *   Lₛ, Uₛ −= L_d·U_d  for each descendant d (two dense products per update)
 *   Dₛ = Lₛ·Uₛ         dense LU of the diagonal block, rows swapped inside it only
 *
 * Threshold pivoting restricted to a supernode's diagonal block (its rows
 * share one pattern, so swapping them keeps the structure): the diagonal
 * entry is the pivot when |a| ≥ tol·(largest in its column), else the
 * largest entry of the column inside the block. When no entry of the block
 * passes, the factorisation reports the column (`ok: false`) and the caller
 * factors that matrix with partial pivoting over the whole column (lu.ts).
 *
 * Storage per supernode s with columns f..f+k−1 and nr rows (its own
 * columns first, then the rows below, as the symbolic analysis lists them):
 * lx holds an nr × k column-major block — the diagonal block (L strictly
 * below its diagonal, U on and above) over L's rows below — and ux the
 * (nr − k) × k block Uₛᵀ (U's rows f..f+k−1 over the columns below).
 */

import { updateSchedule, type UpdateSchedule } from "./cholesky";
import { type Alloc, heap } from "./pool";
import type { Csc } from "./sparse";
import { analyse, type Supernodes, type Symbolic } from "./symbolic";

export interface SupernodalLu {
  n: number;
  S: Symbolic;
  sn: Supernodes;
  schedule: UpdateSchedule;
  /** Start of supernode s's Uᵀ block in ux. */
  uPtr: Int32Array;
  lx: Float64Array;
  ux: Float64Array;
  /** Per entry p of A: its position in lx (≥ 0), or −1 − its position in ux. */
  amap: Int32Array;
  /** Row swaps of the last factorisation: at step j, row j was swapped with row piv[j] (same supernode). */
  piv: Int32Array;
  /** Update products (the largest supernode block). */
  work: Float64Array;
  /** Solve scratch. */
  y: Float64Array;
}

export type LuFactorResult = { ok: true } | { ok: false; column: number };

/**
 * The symbolic phase for A's pattern (structurally symmetric, every diagonal
 * present) with fill-reducing order `order` of the graph (ap, ai) of A + Aᵀ.
 */
export function analyseLu(
  A: Csc,
  ap: Int32Array,
  ai: Int32Array,
  order: Int32Array,
  alloc: Alloc = heap,
): SupernodalLu {
  const n = A.n;
  const S = analyse(n, ap, ai, order, { kernel: "supernodal", alloc });
  const sn = S.supernodes as Supernodes;
  const { count: ns, start, rowPtr, rows, valPtr, of } = sn;
  const uPtr = alloc.i32(ns + 1);
  let u = 0;
  for (let s = 0; s < ns; s++) {
    uPtr[s] = u;
    const k = start[s + 1] - start[s];
    u += (rowPtr[s + 1] - rowPtr[s] - k) * k;
  }
  uPtr[ns] = u;
  const schedule = updateSchedule(S, alloc, alloc.i32(n), alloc.i32(ns), alloc.i32(ns), alloc.i32(ns));
  // Where each entry of A goes.
  const { perm, pinv } = S;
  const amap = alloc.i32(A.p[n]);
  /** Position of row i among supernode s's rows below its columns (binary search: rows are sorted). */
  const below = (s: number, i: number): number => {
    const k = start[s + 1] - start[s];
    let lo = rowPtr[s] + k;
    let hi = rowPtr[s + 1] - 1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (rows[mid] < i) lo = mid + 1;
      else if (rows[mid] > i) hi = mid - 1;
      else return mid - rowPtr[s] - k;
    }
    throw new Error(`lu: row ${i} is not in the pattern of supernode ${s}`);
  };
  for (let j = 0; j < n; j++) {
    const pj = pinv[j];
    for (let p = A.p[j]; p < A.p[j + 1]; p++) {
      const pi = pinv[A.i[p]];
      // Entry (pi, pj) of P·A·Pᵀ: in L's columns when pi ≥ pj, else in U's rows.
      const [r, c] = pi >= pj ? [pi, pj] : [pj, pi];
      const s = of[c];
      const f = start[s];
      const k = start[s + 1] - f;
      const nr = rowPtr[s + 1] - rowPtr[s];
      if (r < f + k) amap[p] = pi >= pj ? valPtr[s] + (c - f) * nr + (r - f) : valPtr[s] + (r - f) * nr + (c - f);
      else if (pi >= pj) amap[p] = valPtr[s] + (c - f) * nr + k + below(s, r);
      else amap[p] = -1 - (uPtr[s] + (c - f) * (nr - k) + below(s, r));
    }
  }
  void perm;
  return {
    n,
    S,
    sn,
    schedule,
    uPtr,
    lx: alloc.f64(sn.values),
    ux: alloc.f64(u),
    amap,
    piv: alloc.i32(n),
    work: alloc.f64(sn.maxBlock),
    y: alloc.f64(n),
  };
}

/** L·U = P·A·Pᵀ with A's values (A has the pattern F was analysed for); `column` is A's column of a failed pivot. */
export function factorLu(F: SupernodalLu, A: Csc, tol = 1e-3): LuFactorResult {
  const { lx, ux, amap, sn, uPtr, piv, work } = F;
  const { updStart, upd, relMaps } = F.schedule;
  const { count: ns, start, rowPtr, valPtr } = sn;
  const ax = A.x as Float64Array;
  lx.fill(0);
  ux.fill(0);
  for (let p = 0; p < amap.length; p++) {
    const m = amap[p];
    if (m >= 0) lx[m] += ax[p];
    else ux[-1 - m] += ax[p];
  }
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const k = start[s + 1] - f;
    const nr = rowPtr[s + 1] - rowPtr[s];
    const nb = nr - k;
    const v0 = valPtr[s];
    const u0 = uPtr[s];
    for (let q = 5 * updStart[s]; q < 5 * updStart[s + 1]; q += 5) {
      const d = upd[q];
      const p0 = upd[q + 1];
      const m1 = upd[q + 2];
      const mu = upd[q + 3];
      const at = upd[q + 4];
      const kd = start[d + 1] - start[d];
      const nrd = rowPtr[d + 1] - rowPtr[d];
      const nbd = nrd - kd;
      const a0 = valPtr[d];
      const ud = uPtr[d];
      // L side: L_s −= L_d(p0.., :) · U_d(:, p0..p0+m1) (mu × m1), into s's columns; U side: Uᵀ_s −=
      // U_d(:, p0+m1..)ᵀ · L_d(p0..p0+m1, :)ᵀ (mu−m1 × m1), into s's rows of U. Rows of d that are consecutive rows
      // of s take the product in place; others through `work` and the row map.
      const mb = mu - m1;
      if (at < 0) {
        const first = -1 - at;
        product(lx, a0 + p0, nrd, ux, ud + p0 - kd, nbd, kd, m1, mu, lx, v0 + first * nr + first, nr);
        if (mb > 0)
          product(ux, ud + p0 - kd + m1, nbd, lx, a0 + p0, nrd, kd, m1, mb, ux, u0 + first * nb + first + m1 - k, nb);
        continue;
      }
      work.fill(0, 0, mu * m1);
      product(lx, a0 + p0, nrd, ux, ud + p0 - kd, nbd, kd, m1, mu, work, 0, mu);
      for (let c = 0; c < m1; c++) {
        const dst = v0 + relMaps[at + c] * nr;
        const w = c * mu;
        for (let r = 0; r < mu; r++) lx[dst + relMaps[at + r]] += work[w + r];
      }
      if (mb === 0) continue;
      work.fill(0, 0, mb * m1);
      product(ux, ud + p0 - kd + m1, nbd, lx, a0 + p0, nrd, kd, m1, mb, work, 0, mb);
      for (let c = 0; c < m1; c++) {
        const dst = u0 + relMaps[at + c] * nb - k;
        const w = c * mb;
        for (let r = 0; r < mb; r++) ux[dst + relMaps[at + m1 + r]] += work[w + r];
      }
    }
    const bad = panelLu(lx, v0, nr, k, ux, u0, nb, piv, f, tol);
    if (bad >= 0) return { ok: false, column: F.S.perm[f + bad] };
  }
  return { ok: true };
}

/**
 * T(r, c) −= Σ_t A(r, t)·B(c, t) for r < rows, c < m: A (rows × kd at a0,
 * leading dimension lda) and B (m × kd at b0, leading dimension ldb), both
 * column-major; T at t0 with leading dimension ldt (in place in a factor's
 * block, or a zeroed work array: its negated product). Four columns of T at a
 * time against four of A: four loads feed sixteen multiply-adds.
 */
function product(
  A: Float64Array,
  a0: number,
  lda: number,
  B: Float64Array,
  b0: number,
  ldb: number,
  kd: number,
  m: number,
  rows: number,
  T: Float64Array,
  t0: number,
  ldt: number,
): void {
  let t = 0;
  for (; t + 4 <= kd; t += 4) {
    const x0 = a0 + t * lda;
    const x1 = x0 + lda;
    const x2 = x1 + lda;
    const x3 = x2 + lda;
    const y0 = b0 + t * ldb;
    const y1 = y0 + ldb;
    const y2 = y1 + ldb;
    const y3 = y2 + ldb;
    let c = 0;
    for (; c + 4 <= m; c += 4) {
      const p00 = B[y0 + c];
      const p01 = B[y1 + c];
      const p02 = B[y2 + c];
      const p03 = B[y3 + c];
      const p10 = B[y0 + c + 1];
      const p11 = B[y1 + c + 1];
      const p12 = B[y2 + c + 1];
      const p13 = B[y3 + c + 1];
      const p20 = B[y0 + c + 2];
      const p21 = B[y1 + c + 2];
      const p22 = B[y2 + c + 2];
      const p23 = B[y3 + c + 2];
      const p30 = B[y0 + c + 3];
      const p31 = B[y1 + c + 3];
      const p32 = B[y2 + c + 3];
      const p33 = B[y3 + c + 3];
      const u0 = t0 + c * ldt;
      const u1 = u0 + ldt;
      const u2 = u1 + ldt;
      const u3 = u2 + ldt;
      for (let r = 0; r < rows; r++) {
        const a = A[x0 + r];
        const b = A[x1 + r];
        const e = A[x2 + r];
        const g = A[x3 + r];
        T[u0 + r] -= a * p00 + b * p01 + e * p02 + g * p03;
        T[u1 + r] -= a * p10 + b * p11 + e * p12 + g * p13;
        T[u2 + r] -= a * p20 + b * p21 + e * p22 + g * p23;
        T[u3 + r] -= a * p30 + b * p31 + e * p32 + g * p33;
      }
    }
    for (; c < m; c++) {
      const p0 = B[y0 + c];
      const p1 = B[y1 + c];
      const p2 = B[y2 + c];
      const p3 = B[y3 + c];
      const u0 = t0 + c * ldt;
      for (let r = 0; r < rows; r++) T[u0 + r] -= A[x0 + r] * p0 + A[x1 + r] * p1 + A[x2 + r] * p2 + A[x3 + r] * p3;
    }
  }
  for (; t < kd; t++) {
    const x0 = a0 + t * lda;
    const y0 = b0 + t * ldb;
    for (let c = 0; c < m; c++) {
      const p = B[y0 + c];
      if (p === 0) continue;
      const u0 = t0 + c * ldt;
      for (let r = 0; r < rows; r++) T[u0 + r] -= A[x0 + r] * p;
    }
  }
}

/**
 * LU of supernode s's panel: the nr × k block at v0 (diagonal block over L's
 * rows below) and its Uᵀ block (nb × k at u0), column by column; rows are
 * swapped inside the diagonal block only (threshold `tol`, see the module
 * comment), recorded in piv from f. Returns −1, or the column of the block
 * whose pivot no row of the block could give.
 */
function panelLu(
  lx: Float64Array,
  v0: number,
  nr: number,
  k: number,
  ux: Float64Array,
  u0: number,
  nb: number,
  piv: Int32Array,
  f: number,
  tol: number,
): number {
  for (let c = 0; c < k; c++) {
    const col = v0 + c * nr;
    let best = c;
    let bmax = Math.abs(lx[col + c]);
    for (let r = c + 1; r < k; r++) {
      const a = Math.abs(lx[col + r]);
      if (a > bmax) {
        bmax = a;
        best = r;
      }
    }
    let cmax = bmax;
    for (let r = k; r < nr; r++) {
      const a = Math.abs(lx[col + r]);
      if (a > cmax) cmax = a;
    }
    if (!(bmax > 0) || !(cmax < Infinity) || bmax < tol * cmax) return c;
    if (Math.abs(lx[col + c]) >= tol * cmax) best = c;
    piv[f + c] = f + best;
    if (best !== c) {
      for (let j = 0; j < k; j++) {
        const a = v0 + j * nr;
        const t = lx[a + c];
        lx[a + c] = lx[a + best];
        lx[a + best] = t;
      }
      const uc = u0 + c * nb;
      const ub = u0 + best * nb;
      for (let i = 0; i < nb; i++) {
        const t = ux[uc + i];
        ux[uc + i] = ux[ub + i];
        ux[ub + i] = t;
      }
    }
    const inv = 1 / lx[col + c];
    for (let r = c + 1; r < nr; r++) lx[col + r] *= inv;
    // The trailing columns of the block: L's rows below them and U's rows of the block.
    const uc = u0 + c * nb;
    for (let j = c + 1; j < k; j++) {
      const colj = v0 + j * nr;
      const ucj = lx[colj + c];
      if (ucj !== 0) for (let r = c + 1; r < nr; r++) lx[colj + r] -= lx[col + r] * ucj;
      const lj = lx[col + j];
      if (lj !== 0 && nb > 0) {
        const uj = u0 + j * nb;
        for (let i = 0; i < nb; i++) ux[uj + i] -= lj * ux[uc + i];
      }
    }
  }
  return -1;
}

/** x = A⁻¹·b with the last successful factorLu of F: x = Pᵀ·U⁻¹·L⁻¹·(swaps)·P·b. b and x may be the same array. */
export function solveLu(F: SupernodalLu, b: Float64Array, x: Float64Array): void {
  const { n, lx, ux, sn, uPtr, piv, y } = F;
  const { perm } = F.S;
  const { count: ns, start, rowPtr, rows, valPtr } = sn;
  for (let k = 0; k < n; k++) y[k] = b[perm[k]];
  // y = L \ y, with the rows of each diagonal block swapped as the factorisation swapped them.
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const k = start[s + 1] - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    for (let c = 0; c < k; c++) {
      const p = piv[f + c];
      if (p !== f + c) {
        const t = y[f + c];
        y[f + c] = y[p];
        y[p] = t;
      }
    }
    for (let c = 0; c < k; c++) {
      const yc = y[f + c];
      if (yc === 0) continue;
      const col = v0 + c * nr;
      for (let r = c + 1; r < k; r++) y[f + r] -= lx[col + r] * yc;
      for (let r = k; r < nr; r++) y[rows[r0 + r]] -= lx[col + r] * yc;
    }
  }
  // y = U \ y.
  for (let s = ns - 1; s >= 0; s--) {
    const f = start[s];
    const k = start[s + 1] - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const nb = nr - k;
    const v0 = valPtr[s];
    const u0 = uPtr[s];
    for (let c = 0; c < k; c++) {
      const uc = u0 + c * nb;
      let sum = y[f + c];
      for (let i = 0; i < nb; i++) sum -= ux[uc + i] * y[rows[r0 + k + i]];
      y[f + c] = sum;
    }
    for (let c = k - 1; c >= 0; c--) {
      let sum = y[f + c];
      for (let j = c + 1; j < k; j++) sum -= lx[v0 + j * nr + c] * y[f + j];
      y[f + c] = sum / lx[v0 + c * nr + c];
    }
  }
  for (let k = 0; k < n; k++) x[perm[k]] = y[k];
}

/** Sign of det A from the last successful factorLu: the signs of U's diagonal, times −1 for each row swap (P·A·Pᵀ keeps it). */
export function determinantSign(F: SupernodalLu): number {
  const { lx, sn, piv } = F;
  const { count: ns, start, rowPtr, valPtr } = sn;
  let sign = 1;
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const nr = rowPtr[s + 1] - rowPtr[s];
    for (let c = 0; c < start[s + 1] - f; c++) {
      const u = lx[valPtr[s] + c * nr + c];
      if (!(u !== 0)) return 0;
      if (u < 0) sign = -sign;
      if (piv[f + c] !== f + c) sign = -sign;
    }
  }
  return sign;
}
