/**
 * Forests: when the graph of a symmetric matrix is a forest (no cycle, no
 * repeated edge), eliminating leaves first creates no fill, so L has the
 * pattern of C itself — the diagonal and one entry per column, at the row of
 * the column's parent in the elimination tree (which is the forest, rooted
 * where the peeling ends). Order, tree and pattern come in O(n + e) without a
 * general symbolic analysis.
 *
 * The peeling keeps per vertex only its degree and the XOR of its neighbours'
 * labels: once a vertex has one edge left, the XOR is that neighbour.
 */

import type { Symbolic } from "./symbolic";

/**
 * Leaf-first elimination order of the multigraph on n vertices whose vertex v
 * has deg[v] edges (self-loops excluded) and nbrXor[v] = XOR of the other end
 * of each; null when some vertices are never peeled (a cycle or a repeated
 * edge). Both arrays are consumed (their memory is reused for the result).
 * Returns perm (perm[k] = k-th vertex eliminated), its inverse pinv, and
 * parent in eliminated labels (parent[k] > k, or -1 for the last vertex of a tree).
 */
export function leafFirstOrder(n: number, deg: Int32Array, nbrXor: Int32Array): { perm: Int32Array; pinv: Int32Array; parent: Int32Array } | null {
  const left = deg;
  const perm = new Int32Array(n);
  let tail = 0;
  for (let v = 0; v < n; v++) if (left[v] <= 1) perm[tail++] = v;
  // Once v is peeled, nbrXor[v] is the vertex it hangs from (no later step
  // touches it: v's last edge is gone), or -1 for a root.
  for (let head = 0; head < tail; head++) {
    const v = perm[head];
    if (left[v] === 0) {
      nbrXor[v] = -1;
      continue;
    }
    const p = nbrXor[v];
    left[v] = 0;
    nbrXor[p] ^= v;
    if (--left[p] === 1) perm[tail++] = p;
  }
  if (tail < n) return null;
  const up = nbrXor;
  const pinv = left;
  for (let k = 0; k < n; k++) pinv[perm[k]] = k;
  const parent = new Int32Array(n);
  for (let k = 0; k < n; k++) {
    const u = up[perm[k]];
    parent[k] = u < 0 ? -1 : pinv[u];
  }
  return { perm, pinv, parent };
}

/**
 * The Symbolic of a forest in leaf-first order (kernel "tree"), with the
 * pattern of the lower triangle of C = P·A·Pᵀ: column k holds row k, then
 * row parent[k] when k is not a root. That is also the pattern of L.
 * Returns the pattern's row indices beside the Symbolic (lp = column pointers).
 */
export function forestSymbolic(perm: Int32Array, pinv: Int32Array, parent: Int32Array): { symbolic: Symbolic; rows: Int32Array } {
  const n = perm.length;
  const lp = new Int32Array(n + 1);
  const counts = new Int32Array(n);
  let nz = 0;
  for (let k = 0; k < n; k++) {
    lp[k] = nz;
    const c = parent[k] < 0 ? 1 : 2;
    counts[k] = c;
    nz += c;
  }
  lp[n] = nz;
  const rows = new Int32Array(nz);
  for (let k = 0; k < n; k++) {
    const q = lp[k];
    rows[q] = k;
    if (parent[k] >= 0) rows[q + 1] = parent[k];
  }
  // Σ count²: 1 per root, 4 per other column.
  const flops = n + 3 * (nz - n);
  return { symbolic: { n, perm, pinv, parent, counts, lp, lnz: nz, flops, kernel: "tree", supernodes: null }, rows };
}
