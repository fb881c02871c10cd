/**
 * Sparse-matrix helpers only the tests use (the solver assembles its
 * matrices straight into compressed form): triplet assembly and `compress`
 * (count, cumulative sum, scatter, sum duplicates — the CSparse way),
 * `transpose`, `multiply`, the permuted triangle a factorisation reads, the
 * permutation vectors and a whole Cholesky solve.
 */
import type { Factor } from "../../src/solver/cholesky";
import { type Csc, cumsum } from "../../src/solver/sparse";
import { lsolve, ltsolve } from "../../src/solver/triangular";

/** A matrix in triplet form: entries (ti[k], tj[k], tx[k]) for k < nz; duplicates are summed by `compress`. */
export class Triplet {
  m: number;
  n: number;
  nz = 0;
  ti: Int32Array;
  tj: Int32Array;
  tx: Float64Array;

  constructor(m: number, n: number, capacity = 16) {
    this.m = m;
    this.n = n;
    const c = Math.max(1, capacity);
    this.ti = new Int32Array(c);
    this.tj = new Int32Array(c);
    this.tx = new Float64Array(c);
  }

  /** Appends entry (i, j, x); amortised O(1). */
  push(i: number, j: number, x: number): void {
    if (this.nz === this.ti.length) this.grow(2 * this.nz);
    this.ti[this.nz] = i;
    this.tj[this.nz] = j;
    this.tx[this.nz] = x;
    this.nz++;
  }

  private grow(capacity: number): void {
    const ti = new Int32Array(capacity);
    const tj = new Int32Array(capacity);
    const tx = new Float64Array(capacity);
    ti.set(this.ti.subarray(0, this.nz));
    tj.set(this.tj.subarray(0, this.nz));
    tx.set(this.tx.subarray(0, this.nz));
    this.ti = ti;
    this.tj = tj;
    this.tx = tx;
  }
}

/** C = compressed-column form of T, duplicates summed, rows sorted within each column. */
export function compress(T: Triplet): Csc {
  const { m, n, nz, ti, tj, tx } = T;
  // Row form first (count, cumsum, scatter), then transpose: both passes are
  // stable, so the column form comes out with sorted rows.
  const rp = new Int32Array(m + 1);
  const w = new Int32Array(Math.max(m, n));
  for (let k = 0; k < nz; k++) w[ti[k]]++;
  cumsum(rp, w, m);
  const rj = new Int32Array(nz);
  const rx = new Float64Array(nz);
  for (let k = 0; k < nz; k++) {
    const q = w[ti[k]]++;
    rj[q] = tj[k];
    rx[q] = tx[k];
  }
  // Sum duplicates within each row (they sit in the same row segment).
  const last = new Int32Array(n).fill(-1);
  let q = 0;
  for (let i = 0; i < m; i++) {
    const start = q;
    for (let k = rp[i]; k < rp[i + 1]; k++) {
      const j = rj[k];
      if (last[j] >= start) {
        rx[last[j]] += rx[k];
      } else {
        last[j] = q;
        rj[q] = j;
        rx[q] = rx[k];
        q++;
      }
    }
    rp[i] = start;
  }
  rp[m] = q;
  return transpose({ m: n, n: m, p: rp, i: rj, x: rx });
}

/** Returns Aᵀ (with values when A has them); rows of the result are sorted. */
export function transpose(A: Csc): Csc {
  const { m, n, p, i, x } = A;
  const nz = p[n];
  const cp = new Int32Array(m + 1);
  const w = new Int32Array(m);
  for (let k = 0; k < nz; k++) w[i[k]]++;
  cumsum(cp, w, m);
  const ci = new Int32Array(nz);
  const cx = x ? new Float64Array(nz) : null;
  for (let j = 0; j < n; j++) {
    for (let k = p[j]; k < p[j + 1]; k++) {
      const q = w[i[k]]++;
      ci[q] = j;
      if (cx && x) cx[q] = x[k];
    }
  }
  return { m: n, n: m, p: cp, i: ci, x: cx };
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

/** y = A·x for a general (not symmetric-stored) A. */
export function multiply(A: Csc, x: Float64Array, y: Float64Array): void {
  const { n, p, i } = A;
  const ax = A.x as Float64Array;
  y.fill(0);
  for (let j = 0; j < n; j++) {
    const xj = x[j];
    for (let k = p[j]; k < p[j + 1]; k++) y[i[k]] += ax[k] * xj;
  }
}

/**
 * One triangle of C = P·A·Pᵀ for a symmetric A stored in full (both
 * triangles): "upper" keeps entries with row ≤ column, "lower" row ≥ column.
 * pinv maps a row of A to its row in C.
 */
export function permutedTriangle(A: Csc, pinv: Int32Array, triangle: "upper" | "lower"): Csc {
  const n = A.n;
  const ap = A.p;
  const ai = A.i;
  const ax = A.x as Float64Array;
  const count = new Int32Array(n);
  for (let j = 0; j < n; j++) {
    const b = pinv[j];
    for (let p = ap[j]; p < ap[j + 1]; p++) {
      const a = pinv[ai[p]];
      if (triangle === "upper" ? a <= b : a >= b) count[b]++;
    }
  }
  const cp = new Int32Array(n + 1);
  cumsum(cp, count, n);
  const ci = new Int32Array(cp[n]);
  const cx = new Float64Array(cp[n]);
  for (let j = 0; j < n; j++) {
    const b = pinv[j];
    for (let p = ap[j]; p < ap[j + 1]; p++) {
      const a = pinv[ai[p]];
      if (triangle === "upper" ? a <= b : a >= b) {
        const q = count[b]++;
        ci[q] = a;
        cx[q] = ax[p];
      }
    }
  }
  return { m: n, n, p: cp, i: ci, x: cx };
}
