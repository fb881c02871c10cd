/**
 * Fill-reducing orderings of a symmetric sparse matrix, given as its
 * adjacency graph: `ap`/`ai` in compressed-column form, the pattern of A + Aᵀ
 * without the diagonal and without repeated entries.
 *
 * Each function returns `perm`: perm[k] is the vertex eliminated k-th.
 *
 * - `amd`: approximate minimum degree (amd.ts);
 * - `nestedDissection`: recursive vertex separators from breadth-first level
 *   structures rooted at pseudo-peripheral vertices (George 1973; George & Liu
 *   1981; Gibbs, Poole, Stockmeyer 1976), separators ordered last, small parts
 *   finished by reverse Cuthill–McKee.
 */

import { amd } from "./amd";
import { type Alloc, heap } from "./pool";

export { amd } from "./amd";

export type OrderingName = "amd" | "nd" | "natural";

/** The identity ordering. */
export function natural(n: number): Int32Array {
  const perm = new Int32Array(n);
  for (let k = 0; k < n; k++) perm[k] = k;
  return perm;
}

/** Induced subgraph of `verts[s .. s+m)`; `local` maps a global vertex to its local index (caller-owned, length n, -1 outside). */
function inducedAmd(
  ap: Int32Array,
  ai: Int32Array,
  verts: Int32Array,
  s: number,
  m: number,
  local: Int32Array,
): Int32Array {
  for (let k = 0; k < m; k++) local[verts[s + k]] = k;
  const sp = new Int32Array(m + 1);
  let nz = 0;
  for (let k = 0; k < m; k++) {
    const v = verts[s + k];
    for (let q = ap[v]; q < ap[v + 1]; q++) if (local[ai[q]] >= 0) nz++;
    sp[k + 1] = nz;
  }
  const si = new Int32Array(nz);
  nz = 0;
  for (let k = 0; k < m; k++) {
    const v = verts[s + k];
    for (let q = ap[v]; q < ap[v + 1]; q++) {
      const u = local[ai[q]];
      if (u >= 0) si[nz++] = u;
    }
  }
  const lp = amd(m, sp, si);
  for (let k = 0; k < m; k++) local[verts[s + k]] = -1;
  return lp;
}

/**
 * Breadth-first level structure (George & Liu 1981) from `root` over
 * the vertices whose `part` is `id`. Each vertex reached is relabelled to
 * `fresh` as it is queued, so a single array is both the membership test and
 * the visited mark (one array read per edge visit). The queue is written to
 * `out` from position `base`; level l is out[levelStart[l] .. levelStart[l+1]).
 * Returns the number of levels; the vertices reached end at levelStart[levels].
 */
function levelStructure(
  ap: Int32Array,
  ai: Int32Array,
  part: Int32Array,
  root: number,
  id: number,
  fresh: number,
  out: Int32Array,
  base: number,
  levelStart: Int32Array,
): number {
  out[base] = root;
  part[root] = fresh;
  let head = base;
  let tail = base + 1;
  let levels = 0;
  levelStart[0] = base;
  while (head < tail) {
    const stop = tail;
    levelStart[++levels] = stop;
    for (; head < stop; head++) {
      const v = out[head];
      let q = ap[v];
      const end = ap[v + 1];
      // Neighbours two at a time (an odd one first): fewer loop branches,
      // about 10% faster on grid graphs (measured).
      if (((end - q) & 1) !== 0) {
        const u = ai[q++];
        if (part[u] === id) {
          part[u] = fresh;
          out[tail++] = u;
        }
      }
      for (; q < end; q += 2) {
        const u = ai[q];
        const w = ai[q + 1];
        if (part[u] === id) {
          part[u] = fresh;
          out[tail++] = u;
        }
        if (part[w] === id) {
          part[w] = fresh;
          out[tail++] = w;
        }
      }
    }
  }
  return levels;
}

/**
 * The vertex of least degree among list[from .. to), the latest one on ties:
 * the pseudo-peripheral candidate taken from the last level of a level
 * structure (Gibbs, Poole, Stockmeyer, "An algorithm for reducing the
 * bandwidth and profile of a sparse matrix", SIAM J. Numer. Anal. 13(2), 1976).
 */
function leastDegree(ap: Int32Array, list: Int32Array, from: number, to: number): number {
  let best = list[to - 1];
  let bestDeg = ap[best + 1] - ap[best];
  for (let k = to - 2; k >= from; k--) {
    const v = list[k];
    const d = ap[v + 1] - ap[v];
    if (d < bestDeg) {
      bestDeg = d;
      best = v;
    }
  }
  return best;
}

/** B parts larger than n / REFINE_SHARE get a root search (the top six levels of a balanced dissection). */
const REFINE_SHARE = 64;
/** A separator level should leave at least m / BALANCE vertices on each side. */
const BALANCE = 32;

/**
 * Puts first in perm every vertex of degree ≤ 1, then every vertex left with
 * degree ≤ 1 by those before it, marking them part = -1; returns how many.
 * Such a vertex is simplicial, so eliminating it causes no fill (Rose, "A
 * graph-theoretic study of the numerical solution of sparse positive definite
 * systems of linear equations", 1972): trees and the trees hanging off a graph
 * cost nothing, where level-structure separators would cut them badly (and
 * one pendant vertex at a time). `deg` is scratch of length ≥ n.
 */
function peel(n: number, ap: Int32Array, ai: Int32Array, perm: Int32Array, part: Int32Array, deg: Int32Array): number {
  let count = 0;
  for (let v = 0; v < n; v++) {
    const d = ap[v + 1] - ap[v];
    deg[v] = d;
    if (d <= 1) {
      perm[count++] = v;
      part[v] = -1;
    }
  }
  for (let head = 0; head < count; head++) {
    const v = perm[head];
    for (let q = ap[v]; q < ap[v + 1]; q++) {
      const u = ai[q];
      if (part[u] === 0 && --deg[u] === 1) {
        perm[count++] = u;
        part[u] = -1;
      }
    }
  }
  return count;
}

/**
 * Nested dissection ordering (George, "Nested dissection of a regular finite
 * element mesh", SIAM J. Numer. Anal. 10(2), 1973; George & Liu, "Computer
 * Solution of Large Sparse Positive Definite Systems", 1981, ch. 8): each part
 * is split by one level of a breadth-first level structure rooted at a
 * pseudo-peripheral vertex, the level minimising |S| / (|A|·|B|); separator
 * vertices with no neighbour beyond the separator move back to A; A, then B,
 * then S are numbered. On grids the levels are diagonals, which fill less
 * than straight cuts.
 *
 * Cost is a few breadth-first searches per level of the dissection, so the
 * roots are found without extra searches where possible:
 * - the graph and each of its components: from their first vertex, then up
 *   to `maxIter` passes from the least-degree vertex of the last level while
 *   that deepens the level structure (Gibbs, Poole & Stockmeyer);
 * - A's root: A's level structure from the parent's root is the parent's,
 *   truncated, so its least-degree deepest vertex (one Gibbs–Poole–Stockmeyer
 *   step) is known without a search;
 * - B's root: parts larger than n/64 search the same way from the parent's
 *   deepest vertex; smaller ones take the least-degree vertex of the level
 *   next to the separator. Measured on 64²–512² grids: Cholesky work 0.4–0.8%
 *   above refining every part, with 16–18% fewer searches; refining none
 *   costs 4–6% more work.
 * A part's vertices occupy a segment of one of two lists; its level structure
 * is written to the same segment of the other list, which is already the
 * A | S | B layout of its children, so nothing is copied back.
 *
 * Vertices of degree ≤ 1, and the trees they end, are numbered first (see
 * `peel`); a separator level must leave m/32 vertices on each side when some
 * level does. Disconnected parts split into components. Parts of at most
 * `leaf` vertices are ordered by reverse Cuthill–McKee: the reverse of the
 * parent's level order, or of their own level structure when they have none.
 * leaf = 16 against 48 on square grids (measured): nnz(L) −17% / −13% / −11%
 * and Cholesky work −16% / −5% / −2% at 64² / 256² / 512², supernodal
 * factorisation −15% at 64², unchanged at 256².
 */
export function nestedDissection(
  n: number,
  ap: Int32Array,
  ai: Int32Array,
  leaf = 16,
  maxIter = 1,
  alloc: Alloc = heap,
): Int32Array {
  const perm = alloc.i32(n);
  if (n === 0) return perm;
  // part[v]: id of v's part (vertices of sibling parts may share one: a
  // separator, marked -1, lies between them); fresh ids come from nextId.
  const part = alloc.i32(n);
  const levelStart = alloc.i32(n + 2);
  const peeled = peel(n, ap, ai, perm, part, levelStart);
  const first = alloc.i32(n);
  let core = 0;
  for (let v = 0; v < n; v++) if (part[v] === 0) first[core++] = v;
  const lists = [first, alloc.i32(n)];
  let local: Int32Array | null = null;
  let nextId = 1;
  // Work stack, six entries per part: segment start, size, part id, first
  // position in perm, root hint (or -1), and flags: bit 0 the list holding
  // the segment, bit 1 "search for a root from the hint", bit 2 "the segment
  // is not in a level order".
  let stack = new Int32Array(6 * 64);
  let sp = 0;
  const push = (s: number, m: number, id: number, off: number, hint: number, flags: number): void => {
    if (sp + 6 > stack.length) {
      const grown = new Int32Array(2 * stack.length);
      grown.set(stack);
      stack = grown;
    }
    stack[sp] = s;
    stack[sp + 1] = m;
    stack[sp + 2] = id;
    stack[sp + 3] = off;
    stack[sp + 4] = hint;
    stack[sp + 5] = flags;
    sp += 6;
  };
  if (core > 0) push(0, core, 0, peeled, -1, 6);
  while (sp > 0) {
    sp -= 6;
    const s = stack[sp];
    const m = stack[sp + 1];
    const id = stack[sp + 2];
    const off = stack[sp + 3];
    const hint = stack[sp + 4];
    const flags = stack[sp + 5];
    const src = lists[flags & 1];
    if (m <= leaf && (flags & 4) === 0) {
      // Reverse of the parent's level order: reverse Cuthill–McKee from the parent's root.
      for (let k = 0; k < m; k++) perm[off + k] = src[s + m - 1 - k];
      continue;
    }
    const other = (flags & 1) ^ 1;
    const dst = lists[other];
    let root = hint >= 0 ? hint : src[s];
    let mark = nextId++;
    let levels = levelStructure(ap, ai, part, root, id, mark, dst, s, levelStart);
    if ((flags & 2) !== 0) {
      // Pseudo-peripheral root: repeat from the least-degree vertex of the last level while that deepens the structure.
      for (let iter = 0; iter < maxIter && levelStart[levels] - s === m; iter++) {
        const best = leastDegree(ap, dst, levelStart[levels - 1], levelStart[levels]);
        const mark2 = nextId++;
        const levels2 = levelStructure(ap, ai, part, best, mark, mark2, dst, s, levelStart);
        mark = mark2;
        if (levels2 < levels) {
          // Shallower: back to root's levels.
          mark = nextId++;
          levels = levelStructure(ap, ai, part, root, mark2, mark, dst, s, levelStart);
          break;
        }
        root = best;
        const deeper = levels2 > levels;
        levels = levels2;
        if (!deeper) break;
      }
    }
    const reached = levelStart[levels] - s;
    if (reached < m) {
      // Disconnected: root's component (already in level order) and every other component become parts of their own.
      push(s, reached, mark, off, root, other);
      let at = s + reached;
      for (let k = s; k < s + m; k++) {
        const v = src[k];
        if (part[v] !== id) continue;
        const cid = nextId++;
        const size = levelStart[levelStructure(ap, ai, part, v, id, cid, dst, at, levelStart)] - at;
        if (size === 1) perm[off + at - s] = v;
        else push(at, size, cid, off + at - s, v, 6 | other);
        at += size;
      }
      continue;
    }
    if (m <= leaf) {
      for (let k = 0; k < m; k++) perm[off + k] = dst[s + m - 1 - k];
      continue;
    }
    if (levels < 3) {
      // Root adjacent to every other vertex: no level separates; minimum degree instead.
      local ??= new Int32Array(n).fill(-1);
      const lp = inducedAmd(ap, ai, dst, s, m, local);
      for (let k = 0; k < m; k++) perm[off + k] = dst[s + lp[k]];
      continue;
    }
    // Separator level minimising |S| / (|A|·|B|) among those leaving at least
    // m/32 vertices on either side, if any does: on expanders a level next to
    // the root scores as well as a middle one, and splitting off a few vertices
    // per search takes quadratic time (20 000-vertex random graph of average
    // degree 6: 3.7 s without the bound, 10 ms with it, work within 0.4%).
    const least = m / BALANCE;
    let below = levelStart[1] - s;
    let sep = 1;
    let bestScore = Infinity;
    for (let l = 1; l < levels - 1; l++) {
      const size = levelStart[l + 1] - levelStart[l];
      const above = m - below - size;
      // size / (below·above) < m, so an unbalanced level scores above every balanced one.
      const score = size / (below * above) + (below < least || above < least ? m : 0);
      if (score < bestScore) {
        bestScore = score;
        sep = l;
      }
      below += size;
    }
    const s0 = levelStart[sep];
    const s1 = levelStart[sep + 1];
    const s2 = levelStart[sep + 2];
    // Thin the separator: a vertex with no neighbour in B (only level sep+1
    // can hold one: mark it for the test) joins A, at the front of the level.
    const markB = nextId++;
    for (let k = s1; k < s2; k++) part[dst[k]] = markB;
    let t = s0;
    for (let k = s0; k < s1; k++) {
      const v = dst[k];
      let touchesB = false;
      const end = ap[v + 1];
      for (let q = ap[v]; q < end; q++) {
        if (part[ai[q]] === markB) {
          touchesB = true;
          break;
        }
      }
      if (touchesB) part[v] = -1;
      else {
        dst[k] = dst[t];
        dst[t++] = v;
      }
    }
    for (let k = s1; k < s2; k++) part[dst[k]] = mark;
    const na = t - s;
    const nb = s + m - s1;
    for (let k = t; k < s1; k++) perm[off + na + nb + k - t] = dst[k];
    const hintA = t > s0 ? leastDegree(ap, dst, s0, t) : leastDegree(ap, dst, levelStart[sep - 1], s0);
    const refineB = nb * REFINE_SHARE > n;
    const hintB = refineB ? dst[s + m - 1] : leastDegree(ap, dst, s1, s2);
    // Larger part pushed first: the stack stays O(log n) deep on balanced splits.
    if (na >= nb) {
      push(s, na, mark, off, hintA, other);
      push(s1, nb, mark, off + na, hintB, refineB ? 2 | other : other);
    } else {
      push(s1, nb, mark, off + na, hintB, refineB ? 2 | other : other);
      push(s, na, mark, off, hintA, other);
    }
  }
  return perm;
}

/** The ordering called `name`. */
export function order(name: OrderingName, n: number, ap: Int32Array, ai: Int32Array, alloc: Alloc = heap): Int32Array {
  switch (name) {
    case "amd":
      return amd(n, ap, ai);
    case "nd":
      return nestedDissection(n, ap, ai, 16, 1, alloc);
    case "natural":
      return natural(n);
  }
}
