/**
 * Symbolic analysis of a sparse symmetric positive-definite matrix: the
 * elimination tree, its postorder, the column counts of the Cholesky factor L
 * and (for the supernodal kernel) the supernodes and their row patterns. The
 * numeric factorisation only fills numbers into the pattern this describes,
 * so a sweep or a Newton loop with a fixed pattern analyses once.
 *
 * Input is the adjacency graph of A (pattern of A + Aᵀ without the diagonal,
 * no repeated entries; see sparse.ts) and a fill-reducing permutation. The
 * analysis composes that permutation with a postorder of the elimination
 * tree (same fill, contiguous supernodes), so `perm` in the result is the one
 * the numeric phase must use: row/column k of C = P·A·Pᵀ is perm[k] of A.
 */

import { type Alloc, heap } from "./pool";

export type Kernel = "simple" | "supernodal";

export interface Supernodes {
  count: number;
  /** Columns of supernode s are start[s] .. start[s+1]-1 (length count+1). */
  start: Int32Array;
  /** Supernode containing column j. */
  of: Int32Array;
  /** Row pattern of supernode s: rows[rowPtr[s] .. rowPtr[s+1]), sorted; its own columns first. */
  rowPtr: Int32Array;
  rows: Int32Array;
  /** Values of supernode s: a dense column-major (rows × columns) block at valPtr[s]. */
  valPtr: Int32Array;
  /** Length of the value array. */
  values: number;
  /** Largest rows·columns of any supernode (sizes the update workspace). */
  maxBlock: number;
  /** Most rows any supernode has below its own columns (sizes the triangular solves' scratch). */
  maxBelow: number;
}

export interface Symbolic {
  n: number;
  /** Row/column k of C is row/column perm[k] of A (fill-reducing order, postordered). */
  perm: Int32Array;
  /** pinv[perm[k]] = k. */
  pinv: Int32Array;
  /** Elimination tree of C: parent[j] > j, or -1 for a root. */
  parent: Int32Array;
  /** Column counts of L, diagonal included. */
  counts: Int32Array;
  /** Column pointers of L for the simple kernel (length n+1). */
  lp: Int32Array;
  /** Number of nonzeros in L, diagonal included. */
  lnz: number;
  /** Σ over columns of count²: the work of the numeric factorisation. */
  flops: number;
  kernel: Kernel;
  /** Present when kernel is "supernodal". */
  supernodes: Supernodes | null;
}

/**
 * Elimination tree of C = P·A·Pᵀ from the graph of A: for each column k, every
 * neighbour i < k (in permuted labels) climbs its current subtree root, with
 * path compression, and the root becomes a child of k.
 */
export function etreeOfGraph(
  n: number,
  ap: Int32Array,
  ai: Int32Array,
  perm: Int32Array,
  pinv: Int32Array,
  alloc: Alloc = heap,
): Int32Array {
  const parent = alloc.i32(n);
  const ancestor = alloc.i32(n);
  for (let k = 0; k < n; k++) {
    parent[k] = -1;
    ancestor[k] = -1;
    const v = perm[k];
    for (let p = ap[v]; p < ap[v + 1]; p++) {
      let i = pinv[ai[p]];
      while (i !== -1 && i < k) {
        const next = ancestor[i];
        ancestor[i] = k;
        if (next === -1) parent[i] = k;
        i = next;
      }
    }
  }
  return parent;
}

/** Postorder of a forest given by parent pointers (children visited in increasing order). */
export function postorder(parent: Int32Array, alloc: Alloc = heap): Int32Array {
  const n = parent.length;
  const head = alloc.i32(n).fill(-1);
  const next = alloc.i32(n);
  const stack = alloc.i32(n);
  const post = alloc.i32(n);
  for (let j = n - 1; j >= 0; j--) {
    const pj = parent[j];
    if (pj === -1) continue;
    next[j] = head[pj];
    head[pj] = j;
  }
  let k = 0;
  for (let root = 0; root < n; root++) {
    if (parent[root] !== -1) continue;
    let top = 0;
    stack[0] = root;
    while (top >= 0) {
      const p = stack[top];
      const i = head[p];
      if (i === -1) {
        top--;
        post[k++] = p;
      } else {
        head[p] = next[i];
        stack[++top] = i;
      }
    }
  }
  return post;
}

/**
 * Column counts of L (diagonal included) in O(nnz(A)·α) time: row subtrees
 * through least common ancestors in a postordered elimination tree (Gilbert,
 * Ng, Peyton, "An efficient algorithm to compute row and column counts for
 * sparse Cholesky factorization", SIAM J. Matrix Anal. Appl. 15(4), 1994).
 * Labels must already be postordered (so the postorder is the identity).
 */
export function columnCounts(
  n: number,
  ap: Int32Array,
  ai: Int32Array,
  perm: Int32Array,
  pinv: Int32Array,
  parent: Int32Array,
  alloc: Alloc = heap,
): Int32Array {
  const delta = alloc.i32(n);
  const first = alloc.i32(n).fill(-1);
  const maxfirst = alloc.i32(n).fill(-1);
  const prevleaf = alloc.i32(n).fill(-1);
  const ancestor = alloc.i32(n);
  for (let i = 0; i < n; i++) ancestor[i] = i;
  for (let k = 0; k < n; k++) {
    let j = k;
    delta[j] = first[j] === -1 ? 1 : 0;
    for (; j !== -1 && first[j] === -1; j = parent[j]) first[j] = k;
  }
  for (let j = 0; j < n; j++) {
    if (parent[j] !== -1) delta[parent[j]]--;
    const fj = first[j];
    const v = perm[j];
    for (let p = ap[v]; p < ap[v + 1]; p++) {
      const i = pinv[ai[p]];
      // Is j a leaf of the row subtree of i? (first descendant beyond every earlier leaf)
      if (i <= j || fj <= maxfirst[i]) continue;
      maxfirst[i] = fj;
      const jprev = prevleaf[i];
      prevleaf[i] = j;
      delta[j]++;
      if (jprev === -1) continue;
      // A later leaf: subtract one at the least common ancestor of jprev and j.
      let q = jprev;
      while (q !== ancestor[q]) q = ancestor[q];
      for (let s = jprev; s !== q;) {
        const sp = ancestor[s];
        ancestor[s] = q;
        s = sp;
      }
      delta[q]--;
    }
    if (parent[j] !== -1) ancestor[j] = parent[j];
  }
  for (let j = 0; j < n; j++) if (parent[j] !== -1) delta[parent[j]] += delta[j];
  return delta;
}

/**
 * Supernodes and their row patterns, children before parents. Fundamental
 * supernodes first (a column joins its predecessor when it is that column's
 * only child in the tree and has one fewer nonzero); then relaxed
 * amalgamation merges a supernode into its parent when they are contiguous
 * and the merge stores few explicit zeros, so the dense kernels get wider
 * blocks: always up to 2 columns, then zero fractions below 0.2, 0.05 and
 * 0.02 up to 16, 48 and beyond columns. (Measured on diffuser grids of 64²,
 * 128² and 256² nodes against the looser 4 / 0.8 / 0.1 / 0.05 often used
 * with compiled dense kernels: 17–20% fewer stored values, factor + solve
 * 5–30% faster here, where each explicit zero costs as much as a nonzero.)
 */
export function findSupernodes(
  n: number,
  ap: Int32Array,
  ai: Int32Array,
  perm: Int32Array,
  pinv: Int32Array,
  parent: Int32Array,
  counts: Int32Array,
  relax = true,
  alloc: Alloc = heap,
): Supernodes {
  const children = alloc.i32(n);
  for (let j = 0; j < n; j++) if (parent[j] !== -1) children[parent[j]]++;
  const fstart: number[] = [];
  for (let j = 0; j < n; j++) {
    const joins = j > 0 && parent[j - 1] === j && counts[j - 1] === counts[j] + 1 && children[j] === 1;
    if (!joins) fstart.push(j);
  }
  const nf = fstart.length;
  fstart.push(n);
  const fof = alloc.i32(n);
  for (let s = 0; s < nf; s++) for (let j = fstart[s]; j < fstart[s + 1]; j++) fof[j] = s;
  // Relaxed amalgamation over the fundamental supernodal tree.
  const gk = alloc.f64(nf);
  const gnr = alloc.f64(nf);
  const gstored = alloc.f64(nf);
  const gzeros = alloc.f64(nf);
  const gfirst = alloc.i32(nf);
  const merged = alloc.u8(nf);
  for (let s = 0; s < nf; s++) {
    const k = fstart[s + 1] - fstart[s];
    const nr = counts[fstart[s]];
    gk[s] = k;
    gnr[s] = nr;
    gstored[s] = k * nr - (k * (k - 1)) / 2;
    gfirst[s] = fstart[s];
  }
  if (relax) {
    for (let s = 0; s < nf; s++) {
      const pj = parent[fstart[s + 1] - 1];
      if (pj === -1) continue;
      const p = fof[pj];
      if (fstart[s + 1] !== fstart[p]) continue;
      const k = gk[s] + gk[p];
      const nr = gk[s] + gnr[p];
      const stored = k * nr - (k * (k - 1)) / 2;
      const zeros = stored - (gstored[s] - gzeros[s]) - (gstored[p] - gzeros[p]);
      const z = zeros / stored;
      const ok = k <= 2 || (k <= 16 && z < 0.2) || (k <= 48 && z < 0.05) || z < 0.02;
      if (!ok) continue;
      gk[p] = k;
      gnr[p] = nr;
      gstored[p] = stored;
      gzeros[p] = zeros;
      gfirst[p] = gfirst[s];
      merged[s] = 1;
    }
  }
  let ns = 0;
  for (let s = 0; s < nf; s++) if (!merged[s]) ns++;
  const start = alloc.i32(ns + 1);
  const nrOf = alloc.i32(ns);
  ns = 0;
  for (let s = 0; s < nf; s++) {
    if (merged[s]) continue;
    start[ns] = gfirst[s];
    nrOf[ns] = gnr[s];
    ns++;
  }
  start[ns] = n;
  const of = alloc.i32(n);
  for (let s = 0; s < ns; s++) for (let j = start[s]; j < start[s + 1]; j++) of[j] = s;
  const rowPtr = alloc.i32(ns + 1);
  const valPtr = alloc.i32(ns + 1);
  let nrows = 0;
  let nvals = 0;
  let maxBlock = 0;
  let maxBelow = 0;
  for (let s = 0; s < ns; s++) {
    rowPtr[s] = nrows;
    valPtr[s] = nvals;
    const nr = nrOf[s];
    const k = start[s + 1] - start[s];
    nrows += nr;
    nvals += nr * k;
    if (nr * nr > maxBlock) maxBlock = nr * nr;
    if (nr - k > maxBelow) maxBelow = nr - k;
  }
  rowPtr[ns] = nrows;
  valPtr[ns] = nvals;
  // Supernodal tree as child lists.
  const head = alloc.i32(ns).fill(-1);
  const next = alloc.i32(ns);
  for (let s = ns - 1; s >= 0; s--) {
    const pj = parent[start[s + 1] - 1];
    if (pj === -1) continue;
    const ps = of[pj];
    next[s] = head[ps];
    head[ps] = s;
  }
  const rows = alloc.i32(nrows);
  const mark = alloc.i32(n).fill(-1);
  // Start of each supernode's rows below its own columns (sorted at the end).
  const below = alloc.i32(ns);
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const l = start[s + 1];
    const r0 = rowPtr[s];
    let t = r0;
    for (let j = f; j < l; j++) {
      rows[t++] = j;
      mark[j] = s;
    }
    const off = t;
    for (let j = f; j < l; j++) {
      const v = perm[j];
      for (let p = ap[v]; p < ap[v + 1]; p++) {
        const i = pinv[ai[p]];
        if (i >= l && mark[i] !== s) {
          mark[i] = s;
          rows[t++] = i;
        }
      }
    }
    for (let c = head[s]; c !== -1; c = next[c]) {
      const kc = start[c + 1] - start[c];
      for (let q = rowPtr[c] + kc; q < rowPtr[c + 1]; q++) {
        const i = rows[q];
        if (i >= l && mark[i] !== s) {
          mark[i] = s;
          rows[t++] = i;
        }
      }
    }
    if (t !== rowPtr[s + 1])
      throw new Error(`supernode ${s}: pattern has ${t - r0} rows, column counts say ${rowPtr[s + 1] - r0}`);
    below[s] = off;
  }
  sortBelow(n, ns, rowPtr, below, rows, alloc);
  return { count: ns, start, of, rowPtr, rows, valPtr, values: nvals, maxBlock, maxBelow };
}

/**
 * Sorts every supernode's rows below its own columns (rows[below[s] ..
 * rowPtr[s+1])) in one transposition: the supernodes are bucketed by row,
 * then the rows are written back in increasing order. Two passes over the
 * row lists instead of one comparison sort per supernode (tens of thousands
 * of small sorts on a 256 × 256 grid).
 */
function sortBelow(n: number, ns: number, rowPtr: Int32Array, below: Int32Array, rows: Int32Array, alloc: Alloc): void {
  const start = alloc.i32(n + 1);
  for (let s = 0; s < ns; s++) for (let q = below[s]; q < rowPtr[s + 1]; q++) start[rows[q] + 1]++;
  for (let i = 0; i < n; i++) start[i + 1] += start[i];
  const owner = alloc.i32(start[n]);
  const at = alloc.i32(n);
  at.set(start.subarray(0, n));
  for (let s = 0; s < ns; s++) for (let q = below[s]; q < rowPtr[s + 1]; q++) owner[at[rows[q]]++] = s;
  for (let i = 0; i < n; i++) {
    for (let p = start[i]; p < start[i + 1]; p++) rows[below[owner[p]]++] = i;
  }
}

/**
 * True when eliminating the vertices in their natural order creates no fill:
 * for every vertex v with later neighbours, the smallest of them, p, is
 * adjacent to all the others (Rose, Tarjan, Lueker, "Algorithmic aspects of
 * vertex elimination on graphs", SIAM J. Comput. 5(2), 1976). O(n + nnz):
 * the checks are grouped by p, then each p verifies its group with one
 * marking of its own neighbours. Graph as for `analyse`.
 */
export function naturalHasNoFill(n: number, ap: Int32Array, ai: Int32Array, alloc: Alloc = heap): boolean {
  const first = alloc.i32(n);
  const start = alloc.i32(n + 1);
  for (let v = 0; v < n; v++) {
    let p = n;
    let later = 0;
    for (let q = ap[v]; q < ap[v + 1]; q++) {
      const u = ai[q];
      if (u > v) {
        later++;
        if (u < p) p = u;
      }
    }
    first[v] = p;
    if (later > 1) start[p + 1] += later - 1;
  }
  for (let v = 0; v < n; v++) start[v + 1] += start[v];
  const checks = alloc.i32(start[n]);
  const fill = alloc.i32(n);
  fill.set(start.subarray(0, n));
  for (let v = 0; v < n; v++) {
    const p = first[v];
    for (let q = ap[v]; q < ap[v + 1]; q++) {
      const u = ai[q];
      if (u > v && u !== p) checks[fill[p]++] = u;
    }
  }
  const mark = first;
  mark.fill(-1);
  for (let p = 0; p < n; p++) {
    if (start[p] === start[p + 1]) continue;
    for (let q = ap[p]; q < ap[p + 1]; q++) mark[ai[q]] = p;
    for (let t = start[p]; t < start[p + 1]; t++) if (mark[checks[t]] !== p) return false;
  }
  return true;
}

export interface AnalyseOptions {
  /** Numeric kernel; "auto" picks supernodal when the factor has enough dense work per column. */
  kernel?: Kernel | "auto";
  /** Where the analysis gets its arrays (default: the heap). */
  alloc?: Alloc;
}

/** The full symbolic analysis of P·A·Pᵀ for the graph (ap, ai) and the fill-reducing order `order`. */
export function analyse(
  n: number,
  ap: Int32Array,
  ai: Int32Array,
  order: Int32Array,
  opts: AnalyseOptions = {},
): Symbolic {
  const alloc = opts.alloc ?? heap;
  const pinv0 = alloc.i32(n);
  for (let k = 0; k < n; k++) pinv0[order[k]] = k;
  const parent0 = etreeOfGraph(n, ap, ai, order, pinv0, alloc);
  const post = postorder(parent0, alloc);
  let identity = true;
  for (let t = 0; t < n && identity; t++) if (post[t] !== t) identity = false;
  let perm = order;
  let pinv = pinv0;
  let parent = parent0;
  if (!identity) {
    // Relabel in postorder: new label t is old label post[t].
    const postInv = alloc.i32(n);
    for (let t = 0; t < n; t++) postInv[post[t]] = t;
    perm = alloc.i32(n);
    pinv = alloc.i32(n);
    parent = alloc.i32(n);
    for (let t = 0; t < n; t++) {
      const old = post[t];
      perm[t] = order[old];
      pinv[order[old]] = t;
      parent[t] = parent0[old] === -1 ? -1 : postInv[parent0[old]];
    }
  }
  const counts = columnCounts(n, ap, ai, perm, pinv, parent, alloc);
  let flops = 0;
  for (let j = 0; j < n; j++) flops += counts[j] * counts[j];
  const lp = alloc.i32(n + 1);
  let lnz = 0;
  for (let j = 0; j < n; j++) {
    lp[j] = lnz;
    lnz += counts[j];
  }
  lp[n] = lnz;
  const want = opts.kernel ?? "auto";
  const kernel: Kernel = want === "auto" ? (flops > 40 * n ? "supernodal" : "simple") : want;
  const supernodes =
    kernel === "supernodal" ? findSupernodes(n, ap, ai, perm, pinv, parent, counts, true, alloc) : null;
  return { n, perm, pinv, parent, counts, lp, lnz, flops, kernel, supernodes };
}
