/**
 * The exact DC solve of a linear-class network in pseudo-voltages
 * (Vittoz & Arreguit 1993; docs/physics.md §3 Pseudo-voltages).
 *
 * With u = exp(−V/U_T) at n-channel nodes and u = exp(V/U_T) at p-channel
 * nodes, a device whose gate and bulk/well sit on rails carries
 * I = g·(u_s − u_d) (nfet drain→source, pfet source→drain), with
 *   nfet: g = i0·(W/L)·e^{−κ·dVT/U_T}·exp((κ(Vg − Vb) + Vb)/U_T)
 *   pfet: g = i0·(W/L)·e^{−κ·dVT/U_T}·exp((κ(Vw − Vg) − Vw)/U_T).
 * KCL at an internal node k is then Σ_m g_km (u_k − u_m) = b_k, with b_k the
 * current the injects draw out of k (n-channel node) or push into k (p-channel
 * node): a weighted graph Laplacian, symmetric positive definite once every
 * group of nodes reaches a rail. Rails enter the right-hand side.
 *
 * Scaling (so that no exponential overflows and the system is O(1)): per
 * polarity class c, u is measured from a reference voltage Vref_c — the
 * class's extreme rail, or beyond it where an inject holds a node far past
 * every rail (û = u/u(Vref_c) ≤ 1 on every rail either way) — and
 * conductances are divided by gs_c = i0·exp(Λ_c)·u(Vref_c), Λ_c the largest
 * gate exponent of the class.
 *
 * Phases: `planLinear` (structure: graph, ordering, symbolic analysis, the
 * device → matrix-entry maps) once per run; `factorLinear` (conductances,
 * numeric Cholesky, rail right-hand side) when rails, sizes, temperature,
 * kappa or mismatch change; `solvePseudo` (injects, triangular solves — or
 * superposition of cached responses when only inject values changed) for
 * every point; then the point's evaluation: `voltagesLinear` (back to node
 * voltages, a logarithm per node, and the check that every û is positive)
 * and `evaluateLinear` (linear-eval.ts: currents and flags from the solved
 * pseudo-voltages); `solveLinear` is solvePseudo + voltagesLinear.
 * `releaseLinear` gives the plan's work arrays back to the thread's pool
 * (pool.ts) when the run ends.
 *
 * Two structures:
 * - a forest (chains, trees: no cycle, no parallel devices): leaves first,
 *   no fill, the factor is two numbers per row (tree.ts) and nothing else is
 *   analysed;
 * - anything else: adjacency graph, fill-reducing ordering, symbolic
 *   analysis and a sparse Cholesky factor (symbolic.ts, cholesky.ts).
 * Rows are kept in elimination order throughout: `prow` maps a node straight
 * to its permuted row, and the planning pass writes one packed table of
 * three integers per device (source end, drain end, gate key), so the
 * per-point loops read one device array instead of five (each typed array a
 * loop touches costs a few loads and checks per iteration in V8's optimised
 * code, measured at about 1 ns: bench/README numbers).
 */

import { type Network, NFET } from "../lang/network";
import { CLASS_N, type Classification } from "./classify";
import { cholesky, type CholeskyWork, choleskyWork, emptyFactor, type Factor, matrixTriangle } from "./cholesky";
import type { DeviceParams } from "./device";
import { natural, order, type OrderingName } from "./order";
import { Arena, pool } from "./pool";
import { cumsum, dedupeAdjacency, type Csc } from "./sparse";
import { analyse, type Kernel, naturalHasNoFill, type Symbolic } from "./symbolic";
import { lsolve, ltsolve } from "./triangular";
import { leafFirstOrder, treeFactor, treeSolve } from "./tree";
import { JUNCTION_TOLERANCE } from "../lang/vocabulary";

/** The fill-reducing ordering used when the natural order has fill (measured on grid256/grid512: see bench/). */
export const DEFAULT_ORDERING: OrderingName = "nd";

export type OrderingChoice = OrderingName | "auto";

export interface LinearOptions {
  /** "auto": a forest's leaf-first order, or the natural order when it has no fill at all, else DEFAULT_ORDERING. */
  ordering?: OrderingChoice;
  kernel?: Kernel | "auto";
  /**
   * Steps of iterative refinement in working precision after the direct
   * solve (default 0: the diagonally dominant Laplacian already gives KCL to
   * ~1e-13 of each node's channel currents; see tests/unit/solver-linear).
   * One step makes the solve componentwise backward stable (Skeel,
   * "Iterative refinement implies numerical stability for Gaussian
   * elimination", Math. Comp. 35, 1980).
   */
  refine?: number;
}

/** A forest's factor in elimination order (tree.ts): parent row, 1/D(k) and L(parent, k). */
interface TreeParts {
  parent: Int32Array;
  diag: Float64Array;
  off: Float64Array;
}

/** The general path's structure: symbolic analysis, the permuted triangle's pattern and the device → entry map. */
interface GeneralParts {
  symbolic: Symbolic;
  /** The permuted triangle the kernel reads (values refilled by factorLinear). */
  C: Csc;
  /** Position in C.x of the diagonal of row k. */
  diagPos: Int32Array;
  /** Per device between two internal rows: position in C.x of its off-diagonal entry (-1 otherwise). */
  posOff: Int32Array;
  work: CholeskyWork;
  factor: Factor | null;
  /** The analysis's, pattern's and factor's arrays (from the pool; given back with the plan). */
  arena: Arena;
}

export interface LinearPlan {
  /** Internal nodes; rows are numbered in elimination order. */
  rows: number;
  /** Per node: its row (≥ 0) for an internal node, −1 − its index in railNodes for a rail. */
  prow: Int32Array;
  /** Node of row k, and 1 when it is an n-channel node (0: p-channel). */
  nodeAt: Int32Array;
  isNAt: Uint8Array;
  /** The rail nodes. */
  railNodes: Int32Array;
  /** Per rail: touched by an n-channel (1) / p-channel (2) source or drain. */
  railTouch: Uint8Array;
  /**
   * Three integers per device: the source end, the drain end and 2·key + p
   * (its gate key and polarity, p = 0 for an nfet and 1 for a pfet). An end
   * indexes y: the row of an internal node (< rows), or rows + 2q + p for
   * rail q. A channel from a node to itself has equal ends (it carries no
   * current).
   */
  pack: Int32Array;
  /** "tree" when the graph is a forest, eliminated leaves first (tree.ts). */
  ordering: OrderingName | "tree";
  tree: TreeParts | null;
  general: GeneralParts | null;
  /** A successful factorisation is in tree or general.factor. */
  factored: boolean;
  /** Per device: ĝ, the scaled pseudo-conductance (I = gs_c·ĝ·(û_s − û_d)). */
  c: Float64Array;
  /** Superposition state for points that change only inject values. */
  sup: Superposition;
  /** The distinct gate keys: device type, gate node and bulk/well node (-1: substrate) of each. */
  keyType: Uint8Array;
  keyGate: Int32Array;
  keyBulk: Int32Array;
  /** Per key: exp(e − Λ_c) of the last factorisation, e the key's gate exponent. */
  keyFactor: Float64Array;
  /**
   * Per key: the pseudo-voltage beyond which a source or drain forward-biases
   * the junction to the key's bulk or well by more than JUNCTION_TOLERANCE
   * (û is monotonic in V: larger û is further beyond).
   */
  keyJunction: Float64Array;
  /** Evaluation scratch: current entering each end (a rail's two polarity slots add up). */
  ent: Float64Array;
  /** Right-hand side from the rails at the last factorisation (scaled, by row). */
  rhsRails: Float64Array;
  /** Scaling of the last factorisation: reference voltages and ln gs per class (index 0 = p, 1 = n). */
  vref: Float64Array;
  lnScale: Float64Array;
  /**
   * Pseudo-voltages û by end: rows 0..rows−1 from the last solve, then
   * rows + 2q + p the rail q's û for polarity p (set by each factorisation).
   */
  y: Float64Array;
  /** Refinement scratch (taken on first use). */
  b: Float64Array;
  r: Float64Array;
  /** Steps of iterative refinement per solve. */
  refine: number;
  /** y holds the pseudo-voltages û of a solvePseudo since the last factorLinear. */
  pseudo: boolean;
  analyseMs: number;
}

export type LinearFailure = { ok: false; node: number; message: string };

/** Most injects a factorisation follows by superposition before it falls back to full solves. */
const MAX_SUPERPOSED = 16;

/**
 * Superposition (the solution is linear in the inject values, docs/physics.md §3 Pseudo-voltages):
 * after the first solve of a factorisation, a point whose injects differ from
 * the reference values only in `changed` is û = rest + Σ_j v_j·z_j, with
 * `rest` the solution for the rails and the unchanged injects and z_j the
 * response to 1 A in inject j (both by row). A sink on an n-channel
 * node adds with one sign everywhere, so no cancellation is introduced.
 */
interface Superposition {
  fresh: boolean;
  disabled: boolean;
  ref: Float64Array;
  isChanged: Uint8Array;
  changed: number[];
  z: Float64Array[];
  /** Taken on first use (length 0 before). */
  rest: Float64Array;
  /** The last solvePseudo formed û as rest + Σ_j v_j·z_j. */
  used: boolean;
  /** The evaluation's linear parts for one changed inject (linear-eval.ts), or null; dropped with rest and z. */
  parts: SuperposedParts | null;
}

/**
 * What the evaluation of a superposed point needs, split like û itself:
 * each quantity at `rest` (…0) and per ampere of the one changed inject
 * (…1, from its z with the rails' û at zero), so that a point's value is
 * part0 + v·part1. Per device: the current (i) and û_d − e⁻⁴·û_s, whose
 * sign is the saturation test (s); per end: the device current entering it (e).
 */
export interface SuperposedParts {
  i0: Float64Array;
  i1: Float64Array;
  s0: Float64Array;
  s1: Float64Array;
  e0: Float64Array;
  e1: Float64Array;
}

/** Gives superposed evaluation parts back to the pool. */
function dropParts(sup: Superposition): void {
  const p = sup.parts;
  if (p) pool.give(p.i0, p.i1, p.s0, p.s1, p.e0, p.e1);
  sup.parts = null;
}

const EMPTY_F64 = new Float64Array(0);

/** Structure of the linear system for `net` (which must be in the linear class, without structural problems). */
export function planLinear(net: Network, cls: Classification, opts: LinearOptions = {}): LinearPlan {
  const t0 = performance.now();
  const { nodes, devices } = net;
  const nn = nodes.names.length;
  const m = devices.count;
  const rv = nodes.railValue;
  // prow: first the natural row of an internal node (node order), later its row in elimination order.
  // In the same pass: node and channel type of each row, and the rail nodes, in natural row order
  // (permuted below when needed; taken at the node count, a bound on both).
  const prow = pool.takeI32(nn);
  let nodeAt = pool.takeI32(nn);
  let isNAt = pool.takeU8(nn);
  const railsAt = pool.takeI32(nn);
  const nodeClass = cls.nodeClass;
  let rows = 0;
  let rails = 0;
  for (let k = 0; k < nn; k++) {
    if (Number.isFinite(rv[k])) {
      railsAt[rails] = k;
      prow[k] = -1 - rails++;
    } else {
      nodeAt[rows] = k;
      isNAt[rows] = nodeClass[k] & CLASS_N ? 1 : 0;
      prow[k] = rows++;
    }
  }
  // Views of the rows' length (give() returns the buffer underneath).
  nodeAt = new Int32Array(nodeAt.buffer, 0, rows);
  isNAt = new Uint8Array(isNAt.buffer, 0, rows);
  const railTouch = new Uint8Array(rails);
  const railNodes = railsAt.slice(0, rails);
  pool.give(railsAt);
  const choice = opts.ordering ?? "auto";
  const forestTried = choice === "auto" && (opts.kernel ?? "auto") === "auto";
  // The planning pass: packed ends and gate keys, the channel types on each
  // rail, and whether the natural order already eliminates leaves first
  // (then `up` is the forest).
  const pack = pool.takeI32(3 * m);
  const up = pool.takeI32(rows);
  const keys = packDevices(net, rows, prow, railTouch, pack, forestTried ? up : null);
  let tree: TreeParts | null = null;
  let analysed: { symbolic: Symbolic; arena: Arena } | null = null;
  let ordering: OrderingName | "tree";
  let pinv: Int32Array | null = null;
  if (keys.naturalForest) {
    ordering = "tree";
    tree = { parent: up, diag: pool.takeF64(rows), off: pool.takeF64(rows) };
  } else {
    const deg = pool.zerosI32(rows);
    const nbrXor = pool.zerosI32(rows);
    degrees(pack, m, deg, forestTried ? nbrXor : null);
    let forest: { perm: Int32Array; pinv: Int32Array; parent: Int32Array } | null = null;
    if (forestTried) {
      const perm = pool.takeI32(rows);
      forest = leafFirstOrder(rows, deg, nbrXor, perm, up);
      pool.give(perm);
    }
    if (forest) {
      // A forest in another order: leaves first by peeling, no fill.
      ordering = "tree";
      pinv = forest.pinv;
      tree = { parent: up, diag: pool.takeF64(rows), off: pool.takeF64(rows) };
      pool.give(nbrXor);
    } else {
      pool.give(up, nbrXor);
      // leafFirstOrder consumed deg: count again.
      if (forestTried) {
        deg.fill(0);
        degrees(pack, m, deg, null);
      }
      const arena = new Arena();
      const g = orderAndAnalyse(pack, m, rows, deg, opts, arena);
      pool.give(deg);
      ordering = g.ordering;
      pinv = g.symbolic.pinv;
      analysed = { symbolic: g.symbolic, arena };
    }
  }
  // Rows in elimination order from here on.
  if (pinv !== null) {
    const byRow = nodeAt;
    const nByRow = isNAt;
    nodeAt = pool.takeI32(rows);
    isNAt = pool.takeU8(rows);
    for (let r = 0; r < rows; r++) {
      const pos = pinv[r];
      nodeAt[pos] = byRow[r];
      isNAt[pos] = nByRow[r];
    }
    pool.give(byRow, nByRow);
    for (let k = 0; k < nn; k++) if (prow[k] >= 0) prow[k] = pinv[prow[k]];
    for (let q = 0; q < 3 * m; q += 3) {
      if (pack[q] < rows) pack[q] = pinv[pack[q]];
      if (pack[q + 1] < rows) pack[q + 1] = pinv[pack[q + 1]];
    }
    if (tree) pool.give(pinv);
  }
  let general: GeneralParts | null = null;
  if (analysed) {
    const { symbolic, arena } = analysed;
    general = {
      symbolic,
      ...triangleEntries(pack, m, rows, symbolic, arena),
      work: choleskyWork(symbolic, arena),
      factor: null,
      arena,
    };
  }
  const ends = rows + 2 * rails;
  return {
    rows,
    prow,
    nodeAt,
    isNAt,
    railNodes,
    railTouch,
    pack,
    ordering,
    tree,
    general,
    factored: false,
    c: pool.takeF64(m),
    sup: {
      fresh: true,
      disabled: false,
      ref: new Float64Array(net.injects.count),
      isChanged: new Uint8Array(net.injects.count),
      changed: [],
      z: [],
      rest: EMPTY_F64,
      used: false,
      parts: null,
    },
    keyType: Uint8Array.from(keys.type),
    keyGate: Int32Array.from(keys.gate),
    keyBulk: Int32Array.from(keys.bulk),
    keyFactor: new Float64Array(keys.type.length),
    keyJunction: new Float64Array(keys.type.length),
    ent: EMPTY_F64,
    rhsRails: pool.takeF64(rows),
    vref: new Float64Array(2),
    lnScale: new Float64Array(2),
    y: pool.takeF64(ends),
    b: EMPTY_F64,
    r: EMPTY_F64,
    refine: opts.refine ?? 0,
    pseudo: false,
    analyseMs: performance.now() - t0,
  };
}

/** Gives the plan's work arrays back to the thread's pool; the plan must not be used afterwards. */
export function releaseLinear(plan: LinearPlan): void {
  pool.give(
    plan.prow,
    plan.nodeAt,
    plan.isNAt,
    plan.pack,
    plan.c,
    plan.ent,
    plan.rhsRails,
    plan.y,
    plan.b,
    plan.r,
    plan.sup.rest,
    ...plan.sup.z,
  );
  dropParts(plan.sup);
  if (plan.tree) pool.give(plan.tree.parent, plan.tree.diag, plan.tree.off);
  if (plan.general) {
    plan.general.arena.release();
    plan.general.factor = null;
  }
  plan.factored = false;
  plan.pseudo = false;
  plan.sup.z = [];
}

/**
 * The planning pass over the devices: each device's packed ends and gate
 * key (keys are numbered in order of appearance; a device's key is looked up
 * only when it differs from the previous device's, which is rare), the
 * channel types touching each rail (railTouch: 1 n-channel, 2 p-channel),
 * and — when `up` is given — whether every internal row has at most one
 * channel neighbour with a higher row number. That makes the graph a forest
 * (parallel devices allowed: they only sum into one entry) whose natural
 * order eliminates leaves first with no fill, up[r] being that neighbour
 * (the parent), or −1.
 */
function packDevices(
  net: Network,
  rows: number,
  prow: Int32Array,
  railTouch: Uint8Array,
  pack: Int32Array,
  up: Int32Array | null,
): { type: number[]; gate: number[]; bulk: number[]; naturalForest: boolean } {
  const { source, drain, type, gate, bulk } = net.devices;
  const m = net.devices.count;
  const nodeCount = net.nodes.names.length + 1;
  const keyOf = new Map<number, number>();
  const kType: number[] = [];
  const kGate: number[] = [];
  const kBulk: number[] = [];
  let forest = up !== null;
  if (up) up.fill(-1);
  let lastType = -1;
  let lastGate = -1;
  let lastBulk = -2;
  let key = -1;
  let p = 0;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const ty = type[d];
    const gn = gate[d];
    const bk = bulk[d];
    if (gn !== lastGate || ty !== lastType || bk !== lastBulk) {
      lastGate = gn;
      lastType = ty;
      lastBulk = bk;
      p = ty === NFET ? 0 : 1;
      const id = (gn * nodeCount + bk + 1) * 2 + p;
      const known = keyOf.get(id);
      if (known === undefined) {
        key = kType.length;
        keyOf.set(id, key);
        kType.push(ty);
        kGate.push(gn);
        kBulk.push(bk);
      } else key = known;
    }
    const s = source[d];
    const t = drain[d];
    let a = prow[s];
    let b = prow[t];
    if (a < 0) {
      railTouch[-1 - a] |= p + 1;
      a = rows + 2 * (-1 - a) + p;
    }
    if (b < 0) {
      railTouch[-1 - b] |= p + 1;
      b = rows + 2 * (-1 - b) + p;
    } else if (a < rows && a !== b && forest) {
      const lo = a < b ? a : b;
      const hi = a < b ? b : a;
      const u = (up as Int32Array)[lo];
      if (u < 0) (up as Int32Array)[lo] = hi;
      else if (u !== hi) forest = false;
    }
    pack[q] = a;
    pack[q + 1] = b;
    pack[q + 2] = 2 * key + p;
  }
  return { type: kType, gate: kGate, bulk: kBulk, naturalForest: forest };
}

/** Degrees of the internal rows (channel neighbours, with repeats) and, when given, the XOR of each row's neighbours. */
function degrees(pack: Int32Array, m: number, deg: Int32Array, nbrXor: Int32Array | null): void {
  const rows = deg.length;
  for (let q = 0; q < 3 * m; q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a < rows && b < rows && a !== b) {
      deg[a]++;
      deg[b]++;
      if (nbrXor) {
        nbrXor[a] ^= b;
        nbrXor[b] ^= a;
      }
    }
  }
}

/**
 * The general structure: adjacency graph of the internal rows (natural rows
 * in pack; deg: their degrees, consumed), ordering and symbolic analysis.
 */
function orderAndAnalyse(
  pack: Int32Array,
  m: number,
  rows: number,
  deg: Int32Array,
  opts: LinearOptions,
  arena: Arena,
): { ordering: OrderingName; symbolic: Symbolic } {
  // Adjacency graph of the internal rows (both directions, duplicates merged).
  const ap = arena.i32(rows + 1);
  cumsum(ap, deg, rows);
  const idx = arena.i32(ap[rows]);
  for (let q = 0; q < 3 * m; q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a < rows && b < rows && a !== b) {
      idx[deg[a]++] = b;
      idx[deg[b]++] = a;
    }
  }
  const adj = dedupeAdjacency(rows, ap, idx, arena);
  const choice = opts.ordering ?? "auto";
  if (choice === "auto" && naturalHasNoFill(rows, adj.p, adj.i, arena)) {
    // The natural order when it has no fill at all (an O(nnz) test, exact).
    return {
      ordering: "natural",
      symbolic: analyse(rows, adj.p, adj.i, natural(rows), {
        kernel: opts.kernel === "supernodal" ? "supernodal" : "simple",
        alloc: arena,
      }),
    };
  }
  const ordering = choice === "auto" ? DEFAULT_ORDERING : choice;
  return {
    ordering,
    symbolic: analyse(rows, adj.p, adj.i, order(ordering, rows, adj.p, adj.i, arena), {
      kernel: opts.kernel,
      alloc: arena,
    }),
  };
}

/**
 * The permuted triangle's pattern: a diagonal entry per column and one
 * off-diagonal entry per device between two internal rows (parallel devices
 * give repeated entries, which every kernel sums), in the column the
 * kernel's triangle puts it; each device's entry position.
 */
function triangleEntries(
  pack: Int32Array,
  m: number,
  rows: number,
  symbolic: Symbolic,
  arena: Arena,
): { C: Csc; diagPos: Int32Array; posOff: Int32Array } {
  const lower = matrixTriangle(symbolic) === "lower";
  const colCount = arena.i32(rows).fill(1);
  for (let q = 0; q < 3 * m; q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a >= rows || b >= rows || a === b) continue;
    colCount[lower ? (a < b ? a : b) : a > b ? a : b]++;
  }
  const cp = arena.i32(rows + 1);
  cumsum(cp, colCount, rows);
  const ci = arena.i32(cp[rows]);
  const cx = arena.f64(cp[rows]);
  const diagPos = arena.i32(rows);
  for (let c = 0; c < rows; c++) {
    diagPos[c] = colCount[c]++;
    ci[diagPos[c]] = c;
  }
  const posOff = arena.i32(m).fill(-1);
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a >= rows || b >= rows || a === b) continue;
    const col = lower ? (a < b ? a : b) : a > b ? a : b;
    const slot = colCount[col]++;
    ci[slot] = col === a ? b : a;
    posOff[d] = slot;
  }
  return { C: { m: rows, n: rows, p: cp, i: ci, x: cx }, diagPos, posOff };
}

/**
 * Conductances, numeric factorisation and the rails' right-hand side for the
 * network's current rail values, sizes, settings and device constants P.
 * On a non-positive pivot, names the node (cannot happen for a valid linear
 * network; reported rather than thrown).
 */
export function factorLinear(plan: LinearPlan, net: Network, P: DeviceParams): { ok: true } | LinearFailure {
  plan.pseudo = false;
  plan.factored = false;
  scaleAndGates(plan, net, P);
  const rhs = plan.rhsRails;
  rhs.fill(0);
  // Sizes: (W/L)·e^{−κ·dVT/U_T} with mismatch, else W/L from w and l (no per-run array).
  const sizeOrW = P.size ?? P.w;
  const l = P.size ? null : P.l;
  let failed = -1;
  if (plan.tree) {
    const { parent, diag, off } = plan.tree;
    diag.fill(0);
    off.fill(0);
    assembleTree(plan.pack, sizeOrW, l, plan.keyFactor, plan.c, plan.y, diag, off, rhs);
    failed = treeFactor(parent, diag, off);
  } else {
    const g = plan.general as GeneralParts;
    const cx = g.C.x as Float64Array;
    cx.fill(0);
    assembleGeneral(plan.pack, sizeOrW, l, plan.keyFactor, plan.c, plan.y, g.diagPos, g.posOff, cx, rhs);
    const res = cholesky(g.C, g.symbolic, g.factor ?? emptyFactor(g.symbolic, g.arena), g.work);
    if (res.ok) g.factor = res.factor;
    else {
      g.factor = null;
      failed = res.column;
    }
  }
  if (failed >= 0) {
    const node = plan.nodeAt[failed];
    return { ok: false, node, message: lostPivot(plan, net, failed) };
  }
  plan.factored = true;
  plan.sup.fresh = true;
  return { ok: true };
}

/** Decades of conductance double precision resolves in one sum (about 15.95: 1/ε = 4.5e15). */
const RESOLVED_DECADES = -Math.log10(Number.EPSILON);

/**
 * Why the factorisation met a pivot that is not positive at `row`. Every
 * node of a network that passed classification reaches a rail through
 * channels, so the matrix is positive definite: a lost pivot means the
 * conductances meeting there (or anywhere in the network) span more decades
 * than double precision resolves — a conductance to a rail, added to one
 * 1e17 times larger, leaves no trace in their sum. Says so, naming the two
 * devices.
 */
function lostPivot(plan: LinearPlan, net: Network, row: number): string {
  const { pack, c } = plan;
  const span = (touching: boolean): { lo: number; hi: number } => {
    let lo = -1;
    let hi = -1;
    for (let d = 0, q = 0; d < c.length; d++, q += 3) {
      if (touching && pack[q] !== row && pack[q + 1] !== row) continue;
      if (pack[q] === pack[q + 1] || !(c[d] > 0)) continue;
      if (lo < 0 || c[d] < c[lo]) lo = d;
      if (hi < 0 || c[d] > c[hi]) hi = d;
    }
    return { lo, hi };
  };
  const name = net.nodes.names[plan.nodeAt[row]];
  for (const touching of [true, false]) {
    const { lo, hi } = span(touching);
    if (lo < 0) continue;
    const decades = Math.log10(c[hi] / c[lo]);
    if (decades < RESOLVED_DECADES - 1) continue;
    const names = net.devices.names;
    return `results not reliable: the elimination lost its pivot at node ${name}, which does reach a rail: ${touching ? "its" : "the network's"} channel conductances span ${decades.toFixed(1)} decades (${names[hi]} against ${names[lo]}), more than double precision resolves (about ${RESOLVED_DECADES.toFixed(0)}): a gate far above the others makes a conductance beside which the rest vanish`;
  }
  return `the linear system is singular at node ${name}; it has no conductance to a rail`;
}

/**
 * Scaling of this factorisation (reference voltages, largest gate exponent
 * Λ per class, ln gs), the rails' pseudo-voltages û and each gate key's factor exp(e − Λ_c).
 */
function scaleAndGates(plan: LinearPlan, net: Network, P: DeviceParams): void {
  const V = net.nodes.railValue;
  const { ut, kappa } = P;
  // Reference voltages: lowest rail under an n-channel terminal, highest under a p-channel one.
  let vrefN = Infinity;
  let vrefP = -Infinity;
  let lamN = -Infinity;
  let lamP = -Infinity;
  const { keyType, keyGate, keyBulk, keyFactor, railNodes, railTouch, y, rows } = plan;
  // Gate exponents: nfet (κ(Vg − Vb) + Vb)/U_T, pfet (κ(Vw − Vg) − Vw)/U_T.
  for (let k = 0; k < keyType.length; k++) {
    const b = keyBulk[k];
    const vb = b >= 0 ? V[b] : 0;
    const vg = V[keyGate[k]];
    if (keyType[k] === NFET) {
      const e = (kappa * (vg - vb) + vb) / ut;
      keyFactor[k] = e;
      if (e > lamN) lamN = e;
    } else {
      const e = (kappa * (vb - vg) - vb) / ut;
      keyFactor[k] = e;
      if (e > lamP) lamP = e;
    }
  }
  for (let q = 0; q < railNodes.length; q++) {
    const v = V[railNodes[q]];
    if (railTouch[q] & 1 && v < vrefN) vrefN = v;
    if (railTouch[q] & 2 && v > vrefP) vrefP = v;
  }
  if (!Number.isFinite(lamN)) lamN = 0;
  if (!Number.isFinite(lamP)) lamP = 0;
  for (let k = 0; k < keyType.length; k++) keyFactor[k] = Math.exp(keyFactor[k] - (keyType[k] === NFET ? lamN : lamP));
  const lnI0 = Math.log(P.i0);
  // A node an inject of I amperes holds through the strongest gate sits near
  // V = U_T·(ln i0 + Λ_c − ln I) (n; p mirrored), which can be far beyond every
  // rail (a drain rail 20 V up, a sink below it): the reference goes there then,
  // so that such nodes' û stay near 1 and far rails' û vanish, not the reverse.
  // (A node's net inject: injects that cancel there hold it nowhere.)
  const { injects } = net;
  const { prow, isNAt } = plan;
  let injN = 0;
  let injP = 0;
  if (injects.count > 0) {
    const net = new Float64Array(rows);
    for (let j = 0; j < injects.count; j++) {
      const v = injects.value[j];
      const rf = prow[injects.from[j]];
      const rt = prow[injects.to[j]];
      if (rf >= 0) net[rf] -= v;
      if (rt >= 0) net[rt] += v;
    }
    for (let r = 0; r < rows; r++) {
      const v = Math.abs(net[r]);
      if (isNAt[r]) injN = Math.max(injN, v);
      else injP = Math.max(injP, v);
    }
  }
  if (injN > 0) vrefN = Math.min(vrefN, ut * (lnI0 + lamN - Math.log(injN)));
  if (injP > 0) vrefP = Math.max(vrefP, -ut * (lnI0 + lamP - Math.log(injP)));
  if (!Number.isFinite(vrefN)) vrefN = 0;
  if (!Number.isFinite(vrefP)) vrefP = 0;
  plan.vref[0] = vrefP;
  plan.vref[1] = vrefN;
  // ln gs_c = ln i0 + Λ_c + ln u(Vref_c)
  plan.lnScale[0] = lnI0 + lamP + vrefP / ut;
  plan.lnScale[1] = lnI0 + lamN - vrefN / ut;
  // Forward bias by more than the tolerance: nfet V < Vb − tol, pfet V > Vw + tol.
  const { keyJunction } = plan;
  for (let k = 0; k < keyType.length; k++) {
    const b = keyBulk[k];
    const vb = b >= 0 ? V[b] : 0;
    keyJunction[k] =
      keyType[k] === NFET
        ? Math.exp(-(vb - JUNCTION_TOLERANCE - vrefN) / ut)
        : Math.exp((vb + JUNCTION_TOLERANCE - vrefP) / ut);
  }
  // û(rail q) = exp(∓(V − Vref)/U_T) ≤ 1, once per rail and polarity.
  for (let q = 0; q < railNodes.length; q++) {
    const v = V[railNodes[q]];
    y[rows + 2 * q] = Math.exp(-(v - vrefN) / ut);
    y[rows + 2 * q + 1] = Math.exp((v - vrefP) / ut);
  }
}

/**
 * A forest's system, with each device's ĝ = size·exp(e − Λ_c) (its gate
 * key's factor) written into c on the way — one pass over the devices, as
 * the device table is the largest thing a factorisation reads (size is
 * (W/L)·e^{−κ·dVT/U_T} when `l` is null, else W/L from w = size and l).
 * A device between two rows goes into the diagonal of both and into off at
 * the lower row (the child: its entry of L); a device from a row to a rail
 * into the row's diagonal and the rails' right-hand side (y beyond the rows
 * holds the rails' û).
 */
function assembleTree(
  pack: Int32Array,
  size: Float64Array,
  l: Float64Array | null,
  keyFactor: Float64Array,
  c: Float64Array,
  y: Float64Array,
  diag: Float64Array,
  off: Float64Array,
  rhs: Float64Array,
): void {
  const m = c.length;
  const rows = diag.length;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    const g = (l === null ? size[d] : size[d] / l[d]) * keyFactor[pack[q + 2] >> 1];
    c[d] = g;
    if (a === b) continue;
    if (a < rows) {
      diag[a] += g;
      if (b < rows) {
        diag[b] += g;
        off[a < b ? a : b] -= g;
      } else rhs[a] += g * y[b];
    } else if (b < rows) {
      diag[b] += g;
      rhs[b] += g * y[a];
    }
  }
}

/**
 * The general system into the permuted triangle's values cx (diagonals at
 * diagPos, a device's entry at posOff). The same walk as assembleTree with two
 * index maps more; kept as its own loop so that a forest needs no per-device
 * map (8 MB for the million-node chain) and each loop stays monomorphic.
 */
function assembleGeneral(
  pack: Int32Array,
  size: Float64Array,
  l: Float64Array | null,
  keyFactor: Float64Array,
  c: Float64Array,
  y: Float64Array,
  diagPos: Int32Array,
  posOff: Int32Array,
  cx: Float64Array,
  rhs: Float64Array,
): void {
  const m = c.length;
  const rows = diagPos.length;
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    const g = (l === null ? size[d] : size[d] / l[d]) * keyFactor[pack[q + 2] >> 1];
    c[d] = g;
    if (a === b) continue;
    if (a < rows) {
      cx[diagPos[a]] += g;
      if (b < rows) {
        cx[diagPos[b]] += g;
        cx[posOff[d]] -= g;
      } else rhs[a] += g * y[b];
    } else if (b < rows) {
      cx[diagPos[b]] += g;
      rhs[b] += g * y[a];
    }
  }
}

/**
 * out = P·b (scaled, by row): the injects with value(j), then (when
 * withRails) the rails' part added to their sum. Injects first: injects that
 * cancel at a node sum to exactly zero there, and the rail's term — which can
 * be 1e-26 of one inject when the rail is far above the reference — survives
 * (added to one inject first, it would be lost in the rounding of the sum).
 * Injects that cancel to within rounding of their magnitudes count as
 * cancelling: their sum is below what the values themselves resolve.
 */
function buildRhs(
  plan: LinearPlan,
  net: Network,
  withRails: boolean,
  value: (j: number) => number,
  out: Float64Array,
): Float64Array {
  const rows = plan.rows;
  out.fill(0, 0, rows);
  const { prow, isNAt } = plan;
  const { injects } = net;
  // Injects: drawn out of an n-channel node, pushed into a p-channel node.
  const invN = Math.exp(-plan.lnScale[1]);
  const invP = Math.exp(-plan.lnScale[0]);
  let magnitudes: Float64Array | null = null;
  for (let j = 0; j < injects.count; j++) {
    const v = value(j);
    if (v === 0) continue;
    const rf = prow[injects.from[j]];
    const rt = prow[injects.to[j]];
    for (let end = 0; end < 2; end++) {
      const r = end === 0 ? rf : rt;
      if (r < 0) continue;
      const t = (end === 0) === (isNAt[r] === 1) ? v * (isNAt[r] ? invN : invP) : -v * (isNAt[r] ? invN : invP);
      if (out[r] !== 0 || magnitudes) {
        // A second inject at this row: keep the sum of magnitudes to tell cancellation from a small sum.
        magnitudes ??= new Float64Array(rows);
        if (magnitudes[r] === 0) magnitudes[r] = Math.abs(out[r]);
      }
      out[r] += t;
      if (magnitudes) magnitudes[r] += Math.abs(t);
    }
  }
  if (magnitudes) {
    const ulps = 8 * Number.EPSILON;
    for (let r = 0; r < rows; r++) if (Math.abs(out[r]) <= ulps * magnitudes[r]) out[r] = 0;
  }
  if (withRails) {
    const rails = plan.rhsRails;
    for (let r = 0; r < rows; r++) out[r] += rails[r];
  }
  return out;
}

/**
 * x = A⁻¹·y in place for any right-hand side y (by row, scaled as the plan's
 * system) with the last factorisation: the adjoint solves of sensitivity.ts
 * (A is symmetric, so Aᵀ's solve is A's).
 */
export function solveWithFactor(plan: LinearPlan, y: Float64Array): void {
  if (!plan.factored) throw new Error("solveWithFactor: no factorisation");
  solveRows(plan, y);
}

function solveRows(plan: LinearPlan, y: Float64Array): void {
  const rows = plan.rows;
  const refine = plan.refine;
  if (refine > 0) {
    if (plan.r.length !== rows) plan.r = pool.takeF64(rows);
    if (plan.b.length !== rows) plan.b = pool.takeF64(rows);
    plan.b.set(y.subarray(0, rows));
  }
  factorSolve(plan, y);
  const { r, b } = plan;
  for (let step = 0; step < refine; step++) {
    multiplyRows(plan, y, r);
    for (let k = 0; k < rows; k++) r[k] = b[k] - r[k];
    factorSolve(plan, r);
    for (let k = 0; k < rows; k++) y[k] += r[k];
  }
}

function factorSolve(plan: LinearPlan, y: Float64Array): void {
  if (plan.tree) treeSolve(plan.tree.parent, plan.tree.diag, plan.tree.off, y);
  else {
    const factor = (plan.general as GeneralParts).factor as Factor;
    lsolve(factor, y);
    ltsolve(factor, y);
  }
}

/** out = C·y by row, from the devices (the matrix itself is overwritten by its factor). */
function multiplyRows(plan: LinearPlan, y: Float64Array, out: Float64Array): void {
  const { pack, c, rows } = plan;
  const m = c.length;
  out.fill(0);
  for (let d = 0, q = 0; d < m; d++, q += 3) {
    const a = pack[q];
    const b = pack[q + 1];
    if (a === b) continue;
    const g = c[d];
    if (a < rows && b < rows) {
      const f = g * (y[a] - y[b]);
      out[a] += f;
      out[b] -= f;
    } else if (a < rows) out[a] += g * y[a];
    else if (b < rows) out[b] += g * y[b];
  }
}
/**
 * Node voltages for the current inject values, with the last factorisation:
 * solvePseudo, then voltagesLinear.
 */
export function solveLinear(plan: LinearPlan, net: Network, V: Float64Array): { ok: true } | LinearFailure {
  solvePseudo(plan, net);
  return voltagesLinear(plan, net, V);
}

/**
 * The linear solve proper: the pseudo-voltages û of every row into plan.y for
 * the current inject values, with the last factorisation (by superposition
 * when only a few inject values changed since it). Their mapping back to
 * node voltages (a logarithm per node) is voltagesLinear's.
 */
export function solvePseudo(plan: LinearPlan, net: Network): void {
  if (!plan.factored) throw new Error("solvePseudo: no factorisation");
  plan.pseudo = false;
  const rows = plan.rows;
  const { injects } = net;
  const values = injects.value;
  const y = plan.y;
  const sup = plan.sup;
  sup.used = false;
  const all = (j: number) => values[j];
  if (sup.fresh || sup.disabled) {
    solveRows(plan, buildRhs(plan, net, true, all, y));
    if (sup.fresh) {
      sup.fresh = false;
      sup.disabled = false;
      sup.ref.set(values);
      sup.isChanged.fill(0);
      sup.changed = [];
      pool.give(...sup.z);
      sup.z = [];
      dropParts(sup);
    }
  } else {
    const before = sup.changed.length;
    for (let j = 0; j < injects.count && !sup.disabled; j++) {
      if (values[j] === sup.ref[j] || sup.isChanged[j]) continue;
      if (sup.changed.length >= MAX_SUPERPOSED) sup.disabled = true;
      else {
        sup.isChanged[j] = 1;
        sup.changed.push(j);
      }
    }
    if (sup.disabled) {
      solveRows(plan, buildRhs(plan, net, true, all, y));
    } else {
      if (sup.changed.length > before) {
        dropParts(sup);
        // rest: rails and the injects still at their reference values; z_j: 1 A in inject j.
        if (sup.rest.length !== rows) sup.rest = pool.takeF64(rows);
        solveRows(
          plan,
          buildRhs(plan, net, true, (j) => (sup.isChanged[j] ? 0 : sup.ref[j]), sup.rest),
        );
        for (let t = before; t < sup.changed.length; t++) {
          const jj = sup.changed[t];
          const z = pool.takeF64(rows);
          solveRows(
            plan,
            buildRhs(plan, net, false, (j) => (j === jj ? 1 : 0), z),
          );
          sup.z.push(z);
        }
      }
      // (No inject changed since the fresh solve: y still holds its solution.)
      if (sup.changed.length > 0) superpose(sup, values, y, rows);
      sup.used = true;
    }
  }
  plan.pseudo = true;
}

/**
 * û = Σ_j v_j·z_j + rest: the changed injects' part first, then rest (as
 * buildRhs adds the rails last: injects that cancel leave its part whole).
 */
function superpose(sup: Superposition, values: Float64Array, y: Float64Array, rows: number): void {
  y.fill(0, 0, rows);
  for (let t = 0; t < sup.changed.length; t++) {
    const v = values[sup.changed[t]];
    if (v === 0) continue;
    const z = sup.z[t];
    for (let k = 0; k < rows; k++) y[k] += v * z[k];
  }
  const rest = sup.rest;
  for (let k = 0; k < rows; k++) y[k] += rest[k];
}

/**
 * Node voltages V = Vref ∓ U_T·ln û from the pseudo-voltages of the last
 * solvePseudo; writes every node of V (rails at their values). û ≤ 0 at a
 * node means its current sources ask more than its channels can carry: no
 * physical operating point, reported naming the node.
 */
export function voltagesLinear(plan: LinearPlan, net: Network, V: Float64Array): { ok: true } | LinearFailure {
  if (!plan.pseudo) throw new Error("voltagesLinear: no solve since the last factorisation");
  const { rows, isNAt, nodeAt, y } = plan;
  const { nodes, settings } = net;
  const vrefN = plan.vref[1];
  const vrefP = plan.vref[0];
  const worst = voltagesFromRows(rows, y, nodeAt, isNAt, vrefN, vrefP, settings.ut, V);
  const rv = nodes.railValue;
  const railNodes = plan.railNodes;
  for (let q = 0; q < railNodes.length; q++) V[railNodes[q]] = rv[railNodes[q]];
  if (worst >= 0) {
    const node = nodeAt[worst];
    const name = nodes.names[node];
    return {
      ok: false,
      node,
      message: `no physical operating point: at node ${name} the current sources ask more than the channels can carry (pseudo-voltage ${isNAt[worst] ? "exp(-V/ut)" : "exp(V/ut)"} would be ${Number.isNaN(y[worst]) ? "undefined" : "≤ 0"})`,
    };
  }
  return { ok: true };
}

/**
 * V = Vref ∓ U_T·ln û for every row; returns −1, or the row whose û is the
 * most negative (or not a number / infinite) when some û is not a positive finite number.
 */
function voltagesFromRows(
  rows: number,
  y: Float64Array,
  nodeAt: Int32Array,
  isNAt: Uint8Array,
  vrefN: number,
  vrefP: number,
  ut: number,
  V: Float64Array,
): number {
  let worst = -1;
  let worstU = Infinity;
  for (let k = 0; k < rows; k++) {
    const u = y[k];
    if (!(u > 0) || u === Infinity) {
      if (!(u >= worstU)) {
        worstU = u;
        worst = k;
      }
      continue;
    }
    const lu = ut * Math.log(u);
    V[nodeAt[k]] = isNAt[k] ? vrefN - lu : vrefP + lu;
  }
  return worst;
}
