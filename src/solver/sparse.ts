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
