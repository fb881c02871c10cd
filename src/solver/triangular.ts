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

/** Scratch for the rows below a supernode's diagonal block (the core is synchronous: one solve at a time). */
let below = new Float64Array(64);

function scratch(n: number): Float64Array {
  if (below.length < n) below = new Float64Array(Math.max(n, 2 * below.length));
  return below;
}

function lsolveSupernodal(sn: Supernodes, lx: Float64Array, x: Float64Array): void {
  const { count, start, rowPtr, rows, valPtr } = sn;
  const t = scratch(sn.maxBelow);
  for (let s = 0; s < count; s++) {
    const f = start[s];
    const k = start[s + 1] - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    if (k === 1) {
      // One column (most supernodes of a mesh's separators' leaves): scatter straight from it.
      const xj = (x[f] /= lx[v0]);
      for (let r = 1; r < nr; r++) x[rows[r0 + r]] -= lx[v0 + r] * xj;
      continue;
    }
    // Dense triangle: x(f:f+k) = L(f:f+k, f:f+k) \ x(f:f+k).
    for (let c = 0; c < k; c++) {
      const col = v0 + c * nr;
      const xj = (x[f + c] /= lx[col + c]);
      for (let r = c + 1; r < k; r++) x[f + r] -= lx[col + r] * xj;
    }
    // Below it: t = L(rows, f:f+k) · x(f:f+k), down the columns (contiguous), then one scatter.
    const nb = nr - k;
    if (nb === 0) continue;
    t.fill(0, 0, nb);
    let c = 0;
    for (; c + 2 <= k; c += 2) {
      const a = v0 + c * nr + k;
      const b = a + nr;
      const xa = x[f + c];
      const xb = x[f + c + 1];
      for (let r = 0; r < nb; r++) t[r] += lx[a + r] * xa + lx[b + r] * xb;
    }
    if (c < k) {
      const a = v0 + c * nr + k;
      const xa = x[f + c];
      for (let r = 0; r < nb; r++) t[r] += lx[a + r] * xa;
    }
    const rk = r0 + k;
    for (let r = 0; r < nb; r++) x[rows[rk + r]] -= t[r];
  }
}

function ltsolveSupernodal(sn: Supernodes, lx: Float64Array, x: Float64Array): void {
  const { count, start, rowPtr, rows, valPtr } = sn;
  const t = scratch(sn.maxBelow);
  for (let s = count - 1; s >= 0; s--) {
    const f = start[s];
    const k = start[s + 1] - f;
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    if (k === 1) {
      let sum = x[f];
      for (let r = 1; r < nr; r++) sum -= lx[v0 + r] * x[rows[r0 + r]];
      x[f] = sum / lx[v0];
      continue;
    }
    // Gather x(rows below) once; each column then takes a contiguous dot product with it.
    const nb = nr - k;
    const rk = r0 + k;
    for (let r = 0; r < nb; r++) t[r] = x[rows[rk + r]];
    for (let c = k - 1; c >= 0; c--) {
      const col = v0 + c * nr;
      let sum = x[f + c];
      for (let r = c + 1; r < k; r++) sum -= lx[col + r] * x[f + r];
      const a = col + k;
      for (let r = 0; r < nb; r++) sum -= lx[a + r] * t[r];
      x[f + c] = sum / lx[col + c];
    }
  }
}
