/**
 * Sparse LU factorisation with threshold partial pivoting, left-looking by
 * columns (Gilbert & Peierls, "Sparse partial pivoting in time proportional
 * to arithmetic operations", SIAM J. Sci. Stat. Comput. 9(5), 1988): column k
 * of L and U comes from one sparse triangular solve x = L \ A(:, q[k]) whose
 * pattern is found by depth-first search in the graph of L.
 *
 * P·A·Q = L·U with L unit lower triangular (diagonal stored first in each
 * column), U upper triangular (diagonal stored last). `q` is a fill-reducing
 * column order; the pivot is the diagonal entry when |a| ≥ tol·max, else the
 * largest entry of the column. A structurally or numerically singular column
 * is a result (`ok: false`), not a throw.
 */

import type { Csc } from "./sparse";

export interface LuFactor {
  n: number;
  /** L: columns by pivot step, row indices in pivot order after factorisation. */
  lp: Int32Array;
  li: Int32Array;
  lx: Float64Array;
  up: Int32Array;
  ui: Int32Array;
  ux: Float64Array;
  /** pinv[i] = k: row i of A is pivot row k. */
  pinv: Int32Array;
  q: Int32Array;
}

export type LuResult = { ok: true; factor: LuFactor } | { ok: false; column: number };

export function lu(A: Csc, q: Int32Array, tol = 1e-3): LuResult {
  const n = A.n;
  const ap = A.p;
  const ai = A.i;
  const ax = A.x as Float64Array;
  let cap = 4 * ap[n] + n;
  let lp = new Int32Array(n + 1);
  let li = new Int32Array(cap);
  let lx = new Float64Array(cap);
  let ucap = cap;
  const up = new Int32Array(n + 1);
  let ui = new Int32Array(ucap);
  let ux = new Float64Array(ucap);
  const pinv = new Int32Array(n).fill(-1);
  const x = new Float64Array(n);
  const xi = new Int32Array(2 * n);
  const mark = new Int32Array(n).fill(-1);
  let lnz = 0;
  let unz = 0;
  for (let k = 0; k < n; k++) {
    lp[k] = lnz;
    up[k] = unz;
    if (lnz + n > cap) {
      cap = 2 * cap + n;
      const a = new Int32Array(cap);
      a.set(li.subarray(0, lnz));
      li = a;
      const b = new Float64Array(cap);
      b.set(lx.subarray(0, lnz));
      lx = b;
    }
    if (unz + n > ucap) {
      ucap = 2 * ucap + n;
      const a = new Int32Array(ucap);
      a.set(ui.subarray(0, unz));
      ui = a;
      const b = new Float64Array(ucap);
      b.set(ux.subarray(0, unz));
      ux = b;
    }
    const col = q[k];
    // Pattern of x = L \ A(:, col): rows reachable from A's rows through L, in topological order xi[top..n).
    let top = n;
    for (let p = ap[col]; p < ap[col + 1]; p++) {
      const i0 = ai[p];
      if (mark[i0] === k) continue;
      // Depth-first search from i0 (stack in xi[0..head], positions in xi[n + head]).
      let head = 0;
      xi[0] = i0;
      while (head >= 0) {
        const j = xi[head];
        const J = pinv[j];
        if (mark[j] !== k) {
          mark[j] = k;
          xi[n + head] = J < 0 ? 0 : lp[J] + 1;
        }
        let done = true;
        const p2 = J < 0 ? 0 : lp[J + 1];
        for (let pp = xi[n + head]; pp < p2; pp++) {
          const i = li[pp];
          if (mark[i] === k) continue;
          xi[n + head] = pp + 1;
          xi[++head] = i;
          done = false;
          break;
        }
        if (done) {
          head--;
          xi[--top] = j;
        }
      }
    }
    // Numeric solve.
    for (let p = top; p < n; p++) x[xi[p]] = 0;
    for (let p = ap[col]; p < ap[col + 1]; p++) x[ai[p]] += ax[p];
    for (let p = top; p < n; p++) {
      const j = xi[p];
      const J = pinv[j];
      if (J < 0) continue;
      const xj = x[j];
      for (let pp = lp[J] + 1; pp < lp[J + 1]; pp++) x[li[pp]] -= lx[pp] * xj;
    }
    // Pivot: the diagonal row when large enough, else the largest candidate.
    let ipiv = -1;
    let amax = -1;
    for (let p = top; p < n; p++) {
      const i = xi[p];
      if (pinv[i] < 0) {
        const a = Math.abs(x[i]);
        if (a > amax) {
          amax = a;
          ipiv = i;
        }
      } else {
        ui[unz] = pinv[i];
        ux[unz++] = x[i];
      }
    }
    if (ipiv === -1 || !(amax > 0) || !Number.isFinite(amax)) return { ok: false, column: col };
    if (pinv[col] < 0 && mark[col] === k && Math.abs(x[col]) >= tol * amax) ipiv = col;
    const pivot = x[ipiv];
    ui[unz] = k;
    ux[unz++] = pivot;
    pinv[ipiv] = k;
    li[lnz] = ipiv;
    lx[lnz++] = 1;
    for (let p = top; p < n; p++) {
      const i = xi[p];
      if (pinv[i] < 0) {
        li[lnz] = i;
        lx[lnz++] = x[i] / pivot;
      }
      x[i] = 0;
    }
  }
  lp[n] = lnz;
  up[n] = unz;
  for (let p = 0; p < lnz; p++) li[p] = pinv[li[p]];
  lp = lp.slice();
  return {
    ok: true,
    factor: {
      n,
      lp,
      li: li.subarray(0, lnz),
      lx: lx.subarray(0, lnz),
      up,
      ui: ui.subarray(0, unz),
      ux: ux.subarray(0, unz),
      pinv,
      q,
    },
  };
}

/** x = A⁻¹·b with P·A·Q = L·U: x = Q·(U \ (L \ (P·b))). `work` has length n. */
export function luSolve(F: LuFactor, b: Float64Array, x: Float64Array, work: Float64Array): void {
  const { n, lp, li, lx, up, ui, ux, pinv, q } = F;
  for (let i = 0; i < n; i++) work[pinv[i]] = b[i];
  for (let j = 0; j < n; j++) {
    const xj = work[j];
    for (let p = lp[j] + 1; p < lp[j + 1]; p++) work[li[p]] -= lx[p] * xj;
  }
  for (let j = n - 1; j >= 0; j--) {
    const d = up[j + 1] - 1;
    const xj = (work[j] /= ux[d]);
    for (let p = up[j]; p < d; p++) work[ui[p]] -= ux[p] * xj;
  }
  for (let k = 0; k < n; k++) x[q[k]] = work[k];
}
