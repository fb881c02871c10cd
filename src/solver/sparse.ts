/**
 * Compressed-column sparse matrices and the small operations every other
 * solver module builds on.
 *
 * Invariants of a `Csc`:
 * - `p` has length n+1, p[0] = 0, p[n] = nnz; column j holds entries
 *   p[j] .. p[j+1]-1 with row indices `i` and values `x`.
 * - Rows inside a column are not necessarily sorted unless a function says so.
 * - `x` is null for a pattern-only matrix.
 */

import { type Alloc, heap } from "./pool";

export interface Csc {
  /** Rows. */
  m: number;
  /** Columns. */
  n: number;
  p: Int32Array;
  i: Int32Array;
  x: Float64Array | null;
}

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

/** p[0..n] = cumulative sum of c[0..n-1], and c is overwritten with p[0..n-1]; returns the total. */
export function cumsum(p: Int32Array, c: Int32Array, n: number): number {
  let nz = 0;
  for (let k = 0; k < n; k++) {
    p[k] = nz;
    nz += c[k];
    c[k] = p[k];
  }
  p[n] = nz;
  return nz;
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
 * The adjacency graph of a square matrix's pattern: the pattern of A + Aᵀ with
 * the diagonal removed and duplicates merged. Columns are the vertices.
 */
export function symmetricAdjacency(A: Csc): { p: Int32Array; i: Int32Array } {
  const n = A.n;
  const nz = A.p[n];
  const ap = A.p;
  const ai = A.i;
  const count = new Int32Array(n);
  for (let j = 0; j < n; j++) {
    for (let k = ap[j]; k < ap[j + 1]; k++) {
      const r = ai[k];
      if (r === j) continue;
      count[r]++;
      count[j]++;
    }
  }
  const p = new Int32Array(n + 1);
  cumsum(p, count, n);
  const idx = new Int32Array(2 * nz);
  for (let j = 0; j < n; j++) {
    for (let k = ap[j]; k < ap[j + 1]; k++) {
      const r = ai[k];
      if (r === j) continue;
      idx[count[r]++] = j;
      idx[count[j]++] = r;
    }
  }
  return dedupeAdjacency(n, p, idx);
}

/** Removes repeated neighbours from each list of an adjacency structure (returns a compact copy). */
export function dedupeAdjacency(
  n: number,
  p: Int32Array,
  idx: Int32Array,
  alloc: Alloc = heap,
): { p: Int32Array; i: Int32Array } {
  const mark = alloc.i32(n).fill(-1);
  const np = alloc.i32(n + 1);
  let q = 0;
  for (let v = 0; v < n; v++) {
    np[v] = q;
    for (let k = p[v]; k < p[v + 1]; k++) {
      const u = idx[k];
      if (mark[u] === v) continue;
      mark[u] = v;
      idx[q++] = u;
    }
  }
  np[n] = q;
  if (q === idx.length) return { p: np, i: idx };
  const i = alloc.i32(q);
  i.set(idx.subarray(0, q));
  return { p: np, i };
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

/**
 * Pattern of an m×n matrix from (row, column) pairs, duplicates merged, rows
 * sorted in each column; `map[k]` is the position in C.i of pair k, so a value
 * for pair k is accumulated with C.x[map[k]] += value.
 */
export function compressPattern(
  m: number,
  n: number,
  ti: Int32Array,
  tj: Int32Array,
  nz: number,
): { C: Csc; map: Int32Array } {
  // Counting sort by row, then stable counting sort by column: sorted (column, row) order.
  const byRow = new Int32Array(nz);
  const rc = new Int32Array(m + 1);
  for (let k = 0; k < nz; k++) rc[ti[k] + 1]++;
  for (let i = 0; i < m; i++) rc[i + 1] += rc[i];
  for (let k = 0; k < nz; k++) byRow[rc[ti[k]]++] = k;
  const order = new Int32Array(nz);
  const cc = new Int32Array(n + 1);
  for (let k = 0; k < nz; k++) cc[tj[k] + 1]++;
  for (let j = 0; j < n; j++) cc[j + 1] += cc[j];
  for (let q = 0; q < nz; q++) {
    const k = byRow[q];
    order[cc[tj[k]]++] = k;
  }
  const p = new Int32Array(n + 1);
  const idx = new Int32Array(nz);
  const map = new Int32Array(nz);
  let out = 0;
  let q = 0;
  for (let j = 0; j < n; j++) {
    p[j] = out;
    let last = -1;
    const end = cc[j];
    for (; q < end; q++) {
      const k = order[q];
      const i = ti[k];
      if (i !== last) {
        idx[out++] = i;
        last = i;
      }
      map[k] = out - 1;
    }
  }
  p[n] = out;
  return { C: { m, n, p, i: idx.slice(0, out), x: new Float64Array(out) }, map };
}
