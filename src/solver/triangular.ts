/**
 * Triangular solves with a Cholesky factor (either kernel of cholesky.ts) and
 * the permutations around them.
 */

import type { Factor } from "./cholesky";
import type { Supernodes } from "./symbolic";

/** x = L \ x (forward substitution, in place). */
export function lsolve(L: Factor, x: Float64Array): void {
  if (L.kernel === "supernodal") return lsolveSupernodal(L.supernodes as Supernodes, L.lx, x);
  const { n, lp, li, lx } = L;
  for (let j = 0; j < n; j++) {
    const p0 = lp[j];
    const xj = (x[j] /= lx[p0]);
    const end = lp[j + 1];
    for (let p = p0 + 1; p < end; p++) x[li[p]] -= lx[p] * xj;
  }
}

/** x = Lᵀ \ x (back substitution, in place). */
export function ltsolve(L: Factor, x: Float64Array): void {
  if (L.kernel === "supernodal") return ltsolveSupernodal(L.supernodes as Supernodes, L.lx, x);
  const { n, lp, li, lx } = L;
  for (let j = n - 1; j >= 0; j--) {
    const p0 = lp[j];
    let s = x[j];
    const end = lp[j + 1];
    for (let p = p0 + 1; p < end; p++) s -= lx[p] * x[li[p]];
    x[j] = s / lx[p0];
  }
}

function lsolveSupernodal(sn: Supernodes, lx: Float64Array, x: Float64Array): void {
  const { count, start, rowPtr, rows, valPtr } = sn;
  for (let s = 0; s < count; s++) {
    const f = start[s];
    const k = start[s + 1] - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    // Dense triangle: x(f:f+k) = L(f:f+k, f:f+k) \ x(f:f+k).
    for (let c = 0; c < k; c++) {
      const col = v0 + c * nr;
      const xj = (x[f + c] /= lx[col + c]);
      for (let r = c + 1; r < k; r++) x[f + r] -= lx[col + r] * xj;
    }
    // Below it: x(rows) -= L(rows, f:f+k) · x(f:f+k), one scattered update per row.
    for (let r = k; r < nr; r++) {
      let sum = 0;
      for (let c = 0, q = v0 + r; c < k; c++, q += nr) sum += lx[q] * x[f + c];
      x[rows[r0 + r]] -= sum;
    }
  }
}

function ltsolveSupernodal(sn: Supernodes, lx: Float64Array, x: Float64Array): void {
  const { count, start, rowPtr, rows, valPtr } = sn;
  let widest = 0;
  for (let s = 0; s < count; s++) if (start[s + 1] - start[s] > widest) widest = start[s + 1] - start[s];
  // acc(c) = L(rows, f+c)ᵀ · x(rows), gathered once per row.
  const acc = new Float64Array(widest);
  for (let s = count - 1; s >= 0; s--) {
    const f = start[s];
    const k = start[s + 1] - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    acc.fill(0, 0, k);
    for (let r = k; r < nr; r++) {
      const xr = x[rows[r0 + r]];
      for (let c = 0, q = v0 + r; c < k; c++, q += nr) acc[c] += lx[q] * xr;
    }
    for (let c = k - 1; c >= 0; c--) {
      const col = v0 + c * nr;
      let sum = x[f + c] - acc[c];
      for (let r = c + 1; r < k; r++) sum -= lx[col + r] * x[f + r];
      x[f + c] = sum / lx[col + c];
    }
  }
}

/** x = P·b, i.e. x[k] = b[perm[k]]. */
export function pvec(perm: Int32Array, b: Float64Array, x: Float64Array): void {
  for (let k = 0; k < perm.length; k++) x[k] = b[perm[k]];
}

/** x = Pᵀ·b, i.e. x[perm[k]] = b[k]. */
export function ipvec(perm: Int32Array, b: Float64Array, x: Float64Array): void {
  for (let k = 0; k < perm.length; k++) x[perm[k]] = b[k];
}

/**
 * x = A⁻¹·b for A = Pᵀ·L·Lᵀ·P: y = P·b, y = L \ y, y = Lᵀ \ y, x = Pᵀ·y.
 * `work` (length n) is scratch; b and x may be the same array.
 */
export function cholSolve(L: Factor, perm: Int32Array, b: Float64Array, x: Float64Array, work: Float64Array): void {
  pvec(perm, b, work);
  lsolve(L, work);
  ltsolve(L, work);
  ipvec(perm, work, x);
}
