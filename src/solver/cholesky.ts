/**
 * Numeric Cholesky factorisation C = L·Lᵀ into the pattern fixed by the
 * symbolic analysis. Two kernels share one contract:
 *
 * - "simple" (up-looking: row k of L is a sparse triangular solve with the rows
 *   above it) for factors with little dense work, e.g. chains and trees;
 *   its input is the UPPER triangle of C (column j holds rows i ≤ j).
 * - "supernodal" (left-looking over fundamental supernodes: dense rank-k
 *   updates from descendant supernodes, then a dense panel factorisation) for
 *   meshes, where most of the work sits in a few dense blocks; its input is
 *   the LOWER triangle of C (column j holds rows i ≥ j).
 *
 * `matrixTriangle(S)` says which triangle a Symbolic wants. A non-positive
 * pivot is a result (`ok: false` with the permuted column), not a throw.
 */

import { type Alloc, heap } from "./pool";
import type { Csc } from "./sparse";
import type { Supernodes, Symbolic } from "./symbolic";

export interface Factor {
  n: number;
  kernel: "simple" | "supernodal";
  /** Simple kernel: L in compressed columns (diagonal first); empty for supernodal. */
  lp: Int32Array;
  li: Int32Array;
  /** Simple kernel: values of L by column; supernodal: the dense supernode blocks. */
  lx: Float64Array;
  supernodes: Supernodes | null;
}

export type FactorResult =
  | { ok: true; factor: Factor }
  /** `column` is the permuted column whose pivot was `pivot` ≤ 0 (or not finite). */
  | { ok: false; column: number; pivot: number };

/** Which triangle of C the kernel of S reads. */
export function matrixTriangle(S: Symbolic): "upper" | "lower" {
  return S.kernel === "simple" ? "upper" : "lower";
}

/** Workspace for repeated factorisations with the same Symbolic. */
export interface CholeskyWork {
  x: Float64Array;
  stack: Int32Array;
  mark: Int32Array;
  next: Int32Array;
  update: Float64Array;
  link: Int32Array;
  head: Int32Array;
  /** The supernodal kernel's update schedule for C's pattern (built by the first factorisation). */
  schedule: Schedule | null;
  alloc: Alloc;
}

/**
 * Everything in the supernodal factorisation that depends on the pattern
 * only, built once and replayed by every factorisation with the same
 * Symbolic and the same pattern of C (a sweep refactors hundreds of times):
 * which descendants update each supernode, in the order the left-looking
 * algorithm applies them, with the positions of their rows inside the
 * target, and where every entry of C goes in the factor's values.
 */
interface Schedule {
  /** The updates of supernode s are records updStart[s] .. updStart[s+1)−1. */
  updStart: Int32Array;
  /**
   * Five integers per update: descendant d, its first row p0 in the target,
   * m1 (its rows among the target's columns), mu (its rows from p0 on), and
   * where its row map starts in relMaps — or −1 − (first row's position)
   * when its rows are consecutive rows of the target.
   */
  upd: Int32Array;
  /** Row maps: positions inside the target block of the descendant's rows p0.. */
  relMaps: Int32Array;
  /** Per entry p of C: its position in the factor's values. */
  cmap: Int32Array;
  /** C's pattern the map was built for (the same object every time in a run). */
  ci: Int32Array;
}

export function choleskyWork(S: Symbolic, alloc: Alloc = heap): CholeskyWork {
  const n = S.n;
  const sn = S.supernodes;
  return {
    // The up-looking kernel's row accumulator and stack (the supernodal one keeps its maps in the schedule).
    x: alloc.f64(sn ? 0 : n),
    stack: alloc.i32(sn ? 0 : n),
    mark: alloc.i32(n),
    next: alloc.i32(sn ? sn.count : n),
    update: alloc.f64(sn ? sn.maxBlock : 0),
    link: alloc.i32(sn ? sn.count : 0),
    head: alloc.i32(sn ? sn.count : 0),
    schedule: null,
    alloc,
  };
}

/** A factor of S's pattern to be filled by `cholesky` (as `into`), its arrays from alloc. */
export function emptyFactor(S: Symbolic, alloc: Alloc = heap): Factor {
  const sn = S.supernodes;
  if (S.kernel === "supernodal" && sn)
    return {
      n: S.n,
      kernel: "supernodal",
      lp: new Int32Array(0),
      li: new Int32Array(0),
      lx: alloc.f64(sn.values),
      supernodes: sn,
    };
  return { n: S.n, kernel: "simple", lp: S.lp, li: alloc.i32(S.lnz), lx: alloc.f64(S.lnz), supernodes: null };
}

/**
 * L = chol(C) with the pattern of S. `into` (a factor of the same Symbolic) is
 * overwritten instead of allocating new arrays.
 */
export function cholesky(C: Csc, S: Symbolic, into?: Factor, work?: CholeskyWork): FactorResult {
  const w = work ?? choleskyWork(S);
  const out = into ?? emptyFactor(S);
  return S.kernel === "simple" ? upLooking(C, S, w, out) : supernodal(C, S, w, out);
}

function upLooking(C: Csc, S: Symbolic, w: CholeskyWork, out: Factor): FactorResult {
  const n = S.n;
  const lp = S.lp;
  const parent = S.parent;
  const { li, lx } = out;
  const { x, stack, mark } = w;
  // next[j]: next free slot in column j of L.
  const next = w.next;
  const cp = C.p;
  const ci = C.i;
  const cx = C.x as Float64Array;
  mark.fill(-1);
  for (let j = 0; j < n; j++) next[j] = lp[j];
  for (let k = 0; k < n; k++) {
    // Pattern of row k of L: the elimination-tree paths from each i < k with
    // C(i, k) ≠ 0, stacked in topological order in stack[top..n).
    let top = n;
    mark[k] = k;
    x[k] = 0;
    for (let p = cp[k]; p < cp[k + 1]; p++) {
      let i = ci[p];
      if (i > k) continue;
      x[i] += cx[p];
      let len = 0;
      while (mark[i] !== k) {
        stack[len++] = i;
        mark[i] = k;
        i = parent[i];
      }
      while (len > 0) stack[--top] = stack[--len];
    }
    // x = L(0:k-1, 0:k-1) \ C(0:k-1, k); d = C(k,k) - ‖L(k, 0:k-1)‖².
    let d = x[k];
    x[k] = 0;
    for (; top < n; top++) {
      const i = stack[top];
      const lki = x[i] / lx[lp[i]];
      x[i] = 0;
      const end = next[i];
      for (let p = lp[i] + 1; p < end; p++) x[li[p]] -= lx[p] * lki;
      d -= lki * lki;
      li[end] = k;
      lx[end] = lki;
      next[i] = end + 1;
    }
    // The row solve leaves x all zero again, so a failure needs no cleanup.
    if (!(d > 0) || d === Infinity) return { ok: false, column: k, pivot: d };
    const p = next[k]++;
    li[p] = k;
    lx[p] = Math.sqrt(d);
  }
  return { ok: true, factor: out };
}

/** A growable Int32Array (the schedule's sizes are known only at its end). */
class IntList {
  data: Int32Array;
  length = 0;
  constructor(capacity: number) {
    this.data = new Int32Array(Math.max(16, capacity));
  }
  push(v: number): void {
    if (this.length === this.data.length) {
      const grown = new Int32Array(2 * this.data.length);
      grown.set(this.data);
      this.data = grown;
    }
    this.data[this.length++] = v;
  }
  /** The values, copied into an array from alloc. */
  finish(alloc: Alloc): Int32Array {
    const out = alloc.i32(this.length);
    out.set(this.data.subarray(0, this.length));
    return out;
  }
}

/** Which descendants update each supernode, in the left-looking order, with their rows' places (see Schedule). */
export interface UpdateSchedule {
  updStart: Int32Array;
  upd: Int32Array;
  relMaps: Int32Array;
}

/**
 * The updates of S's supernodes (pattern only: the same for a Cholesky and
 * for an LU of a matrix with S's symmetric pattern). Scratch: rel (length
 * n), ptr, link and head (length: supernodes).
 */
export function updateSchedule(
  S: Symbolic,
  alloc: Alloc,
  rel: Int32Array,
  ptr: Int32Array,
  link: Int32Array,
  head: Int32Array,
): UpdateSchedule {
  const sn = S.supernodes as Supernodes;
  const { count: ns, start, of, rowPtr, rows } = sn;
  const updStart = alloc.i32(ns + 1);
  const upd = new IntList(5 * ns);
  const relMaps = new IntList(4 * ns);
  head.fill(-1);
  for (let s = 0; s < ns; s++) {
    const l = start[s + 1];
    const k = l - start[s];
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    for (let t = 0; t < nr; t++) rel[rows[r0 + t]] = t;
    updStart[s] = upd.length / 5;
    let d = head[s];
    head[s] = -1;
    while (d !== -1) {
      const dnext = link[d];
      const rd0 = rowPtr[d];
      const nrd = rowPtr[d + 1] - rd0;
      const p0 = ptr[d];
      let p1 = p0;
      while (p1 < nrd && rows[rd0 + p1] < l) p1++;
      const mu = nrd - p0;
      upd.push(d);
      upd.push(p0);
      upd.push(p1 - p0);
      upd.push(mu);
      const first = rel[rows[rd0 + p0]];
      if (rel[rows[rd0 + nrd - 1]] - first === mu - 1) upd.push(-1 - first);
      else {
        upd.push(relMaps.length);
        for (let r = 0; r < mu; r++) relMaps.push(rel[rows[rd0 + p0 + r]]);
      }
      ptr[d] = p1;
      if (p1 < nrd) {
        const target = of[rows[rd0 + p1]];
        link[d] = head[target];
        head[target] = d;
      }
      d = dnext;
    }
    if (nr > k) {
      ptr[s] = k;
      const target = of[rows[r0 + k]];
      link[s] = head[target];
      head[target] = s;
    }
  }
  updStart[ns] = upd.length / 5;
  return { updStart, upd: upd.finish(alloc), relMaps: relMaps.finish(alloc) };
}

/** The update schedule of S's supernodes and where C's entries go (see Schedule). */
function buildSchedule(C: Csc, S: Symbolic, w: CholeskyWork): Schedule {
  const sn = S.supernodes as Supernodes;
  const { count: ns, start, rowPtr, rows, valPtr } = sn;
  const rel = w.mark;
  const cp = C.p;
  const ci = C.i;
  const cmap = w.alloc.i32(cp[S.n]);
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const r0 = rowPtr[s];
    const nr = rowPtr[s + 1] - r0;
    const v0 = valPtr[s];
    for (let t = 0; t < nr; t++) rel[rows[r0 + t]] = t;
    for (let j = f; j < start[s + 1]; j++) {
      const col = v0 + (j - f) * nr;
      for (let p = cp[j]; p < cp[j + 1]; p++) cmap[p] = col + rel[ci[p]];
    }
  }
  return { ...updateSchedule(S, w.alloc, rel, w.next, w.link, w.head), cmap, ci };
}

function supernodal(C: Csc, S: Symbolic, w: CholeskyWork, out: Factor): FactorResult {
  const sn = S.supernodes as Supernodes;
  const { count: ns, start, rowPtr, rows, valPtr } = sn;
  const lx = out.lx;
  if (w.schedule === null || w.schedule.ci !== C.i) w.schedule = buildSchedule(C, S, w);
  const { updStart, upd, relMaps, cmap } = w.schedule;
  const U = w.update;
  // Every block starts as C's entries (zeros elsewhere).
  const cx = C.x as Float64Array;
  lx.fill(0);
  for (let p = 0; p < cmap.length; p++) lx[cmap[p]] += cx[p];
  for (let s = 0; s < ns; s++) {
    const f = start[s];
    const k = start[s + 1] - f;
    const nr = rowPtr[s + 1] - rowPtr[s];
    const v0 = valPtr[s];
    // Block -= L(rows, d) · L(f:l, d)ᵀ for every descendant supernode d with rows in f:l.
    for (let q = 5 * updStart[s]; q < 5 * updStart[s + 1]; q += 5) {
      const d = upd[q];
      const p0 = upd[q + 1];
      const m1 = upd[q + 2];
      const mu = upd[q + 3];
      const at = upd[q + 4];
      const kd = start[d + 1] - start[d];
      const rd0 = rowPtr[d];
      const nrd = rowPtr[d + 1] - rd0;
      const a0 = valPtr[d] + p0;
      if (at < 0) {
        // d's rows are consecutive rows of s (so its first m1 rows are consecutive columns): straight into the block.
        outerProduct(lx, a0, nrd, kd, lx, a0, nrd, m1, mu, 0, lx, v0 + (rows[rd0 + p0] - f) * nr - 1 - at, nr, -1);
      } else if (kd <= 4) {
        // Few columns: each entry's whole sum, subtracted where it goes (one scattered write per entry).
        scatterFew(lx, a0, nrd, kd, m1, mu, relMaps, at, rows, rd0 + p0, v0, f, nr);
      } else {
        // U (mu × m1, lower part) = Ld(p0:nrd, :) · Ld(p0:p1, :)ᵀ, then scattered into the block.
        U.fill(0, 0, mu * m1);
        outerProduct(lx, a0, nrd, kd, lx, a0, nrd, m1, mu, 0, U, 0, mu, 1);
        for (let c = 0; c < m1; c++) {
          const dst = v0 + (rows[rd0 + p0 + c] - f) * nr;
          const uc = c * mu;
          for (let r = c; r < mu; r++) lx[dst + relMaps[at + r]] -= U[uc + r];
        }
      }
    }
    const bad = panelCholesky(lx, v0, nr, k);
    if (bad >= 0) return { ok: false, column: f + bad, pivot: lx[v0 + bad * nr + bad] };
  }
  return { ok: true, factor: out };
}

/**
 * The update of the block at v0 (columns from f, leading dimension nr) by a
 * descendant with kd ≤ 4 columns at a0 (leading dimension nrd): for each of
 * its first m1 rows c (a column of the block) and each row r ≥ c, the whole
 * Σ_t L(r,t)·L(c,t) is subtracted at the block's row relMap[at + r] — one
 * scattered write per entry instead of one per column. Columns beyond kd are
 * read as column 0 times a zero factor (the values are finite).
 */
function scatterFew(
  lx: Float64Array,
  a0: number,
  nrd: number,
  kd: number,
  m1: number,
  mu: number,
  relMap: Int32Array,
  at: number,
  rows: Int32Array,
  rowBase: number,
  v0: number,
  f: number,
  nr: number,
): void {
  const x0 = a0;
  const x1 = kd > 1 ? a0 + nrd : a0;
  const x2 = kd > 2 ? a0 + 2 * nrd : a0;
  const x3 = kd > 3 ? a0 + 3 * nrd : a0;
  for (let c = 0; c < m1; c++) {
    const l0 = lx[x0 + c];
    const l1 = kd > 1 ? lx[x1 + c] : 0;
    const l2 = kd > 2 ? lx[x2 + c] : 0;
    const l3 = kd > 3 ? lx[x3 + c] : 0;
    const dst = v0 + (rows[rowBase + c] - f) * nr;
    for (let r = c; r < mu; r++)
      lx[dst + relMap[at + r]] -= lx[x0 + r] * l0 + lx[x1 + r] * l1 + lx[x2 + r] * l2 + lx[x3 + r] * l3;
  }
}

/**
 * T(r, c) += sign · Σ_t A(r, t)·B(c, t) for columns c < m and rows r from
 * r0 + (c rounded down to a multiple of 4) to mu (column-major operands: A
 * and B start at a0 and b0 with leading dimensions lda and ldb and `kd`
 * columns; T starts at t0 with leading dimension ldt). Rows above a
 * column's diagonal inside its group of four are written too (callers keep
 * no data there). Register blocking of four columns of A by four columns of
 * T: four loads of A feed sixteen multiply-adds, so the loop is bound by
 * arithmetic rather than by loads (measured 2.3 against 1.1 Gmadd/s for two
 * columns of T on the development VM).
 */
function outerProduct(
  A: Float64Array,
  a0: number,
  lda: number,
  kd: number,
  B: Float64Array,
  b0: number,
  ldb: number,
  m: number,
  mu: number,
  r0: number,
  T: Float64Array,
  t0: number,
  ldt: number,
  sign: number,
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
      const p00 = sign * B[y0 + c];
      const p01 = sign * B[y1 + c];
      const p02 = sign * B[y2 + c];
      const p03 = sign * B[y3 + c];
      const p10 = sign * B[y0 + c + 1];
      const p11 = sign * B[y1 + c + 1];
      const p12 = sign * B[y2 + c + 1];
      const p13 = sign * B[y3 + c + 1];
      const p20 = sign * B[y0 + c + 2];
      const p21 = sign * B[y1 + c + 2];
      const p22 = sign * B[y2 + c + 2];
      const p23 = sign * B[y3 + c + 2];
      const p30 = sign * B[y0 + c + 3];
      const p31 = sign * B[y1 + c + 3];
      const p32 = sign * B[y2 + c + 3];
      const p33 = sign * B[y3 + c + 3];
      const u0 = t0 + c * ldt;
      const u1 = u0 + ldt;
      const u2 = u1 + ldt;
      const u3 = u2 + ldt;
      for (let r = r0 + c; r < mu; r++) {
        const a = A[x0 + r];
        const b = A[x1 + r];
        const e = A[x2 + r];
        const g = A[x3 + r];
        T[u0 + r] += a * p00 + b * p01 + e * p02 + g * p03;
        T[u1 + r] += a * p10 + b * p11 + e * p12 + g * p13;
        T[u2 + r] += a * p20 + b * p21 + e * p22 + g * p23;
        T[u3 + r] += a * p30 + b * p31 + e * p32 + g * p33;
      }
    }
    for (; c < m; c++) {
      const p0 = sign * B[y0 + c];
      const p1 = sign * B[y1 + c];
      const p2 = sign * B[y2 + c];
      const p3 = sign * B[y3 + c];
      const u0 = t0 + c * ldt;
      for (let r = r0 + (c & ~3); r < mu; r++)
        T[u0 + r] += A[x0 + r] * p0 + A[x1 + r] * p1 + A[x2 + r] * p2 + A[x3 + r] * p3;
    }
  }
  for (; t < kd; t++) {
    const x0 = a0 + t * lda;
    const y0 = b0 + t * ldb;
    for (let c = 0; c < m; c++) {
      const p = sign * B[y0 + c];
      if (p === 0) continue;
      const u0 = t0 + c * ldt;
      for (let r = r0 + (c & ~3); r < mu; r++) T[u0 + r] += A[x0 + r] * p;
    }
  }
}

/**
 * Dense Cholesky of the nr × k panel at v0 (column-major, leading dimension
 * nr; the top k × k block is the diagonal block, lower triangle). Columns in
 * groups of four: each group first takes the update of all earlier columns
 * through the 4 × 4 outer-product kernel; then each column of the group
 * takes its pivot (its diagonal minus the group's earlier columns), and one
 * pass subtracts those columns and scales by 1/L(c,c). Returns −1, or the
 * first column whose pivot is not positive and finite.
 */
function panelCholesky(lx: Float64Array, v0: number, nr: number, k: number): number {
  for (let c0 = 0; c0 < k; c0 += 4) {
    const cw = k - c0 < 4 ? k - c0 : 4;
    // Columns c0..c0+cw −= L(:, 0:c0) · L(c0:c0+cw, 0:c0)ᵀ, rows from c0 down.
    if (c0 > 0) outerProduct(lx, v0, nr, c0, lx, v0 + c0, nr, cw, nr, c0, lx, v0 + c0 * nr, nr, -1);
    // The group's columns (a column beyond the group reads column c0 times a zero factor).
    const a0 = v0 + c0 * nr;
    const a1 = cw > 1 ? a0 + nr : a0;
    const a2 = cw > 2 ? a0 + 2 * nr : a0;
    for (let j = 0; j < cw; j++) {
      const c = c0 + j;
      const col = v0 + c * nr;
      // L(c, c0..c−1): the group's earlier columns at row c (zero beyond j).
      const l0 = j > 0 ? lx[a0 + c] : 0;
      const l1 = j > 1 ? lx[a1 + c] : 0;
      const l2 = j > 2 ? lx[a2 + c] : 0;
      const piv = lx[col + c] - (l0 * lx[a0 + c] + l1 * lx[a1 + c] + l2 * lx[a2 + c]);
      if (!(piv > 0) || piv === Infinity) {
        lx[col + c] = piv;
        return c;
      }
      const ljj = Math.sqrt(piv);
      lx[col + c] = ljj;
      const inv = 1 / ljj;
      if (j === 0) for (let r = c + 1; r < nr; r++) lx[col + r] *= inv;
      else
        for (let r = c + 1; r < nr; r++)
          lx[col + r] = (lx[col + r] - (lx[a0 + r] * l0 + lx[a1 + r] * l1 + lx[a2 + r] * l2)) * inv;
    }
  }
  return -1;
}
