/**
 * The planning pass of the linear solve (linear.ts): once per network
 * structure, the rows in elimination order, each device packed as its two
 * ends and its gate key, the system's pattern, and the ordering and symbolic
 * analysis of the general path (a forest needs none: tree.ts). Also the
 * plan's types, the superposition state it carries from point to point, and
 * the release of its work arrays.
 */

import { type Network, NFET } from "../lang/network";
import { CLASS_N, type Classification } from "./classify";
import { type CholeskyWork, choleskyWork, type Factor, matrixTriangle } from "./cholesky";
import { natural, order, type OrderingName } from "./order";
import { Arena, pool } from "./pool";
import { cumsum, dedupeAdjacency, type Csc } from "./sparse";
import { analyse, type Kernel, naturalHasNoFill, type Symbolic } from "./symbolic";
import { leafFirstOrder } from "./tree";

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
export interface GeneralParts {
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
export const MAX_SUPERPOSED = 16;

/**
 * Superposition (the solution is linear in the inject values, docs/physics.md §3 Pseudo-voltages):
 * after the first solve of a factorisation, a point whose injects differ from
 * the reference values only in `changed` is û = rest + Σ_j v_j·z_j, with
 * `rest` the solution for the rails and the unchanged injects and z_j the
 * response to 1 A in inject j (both by row). A sink on an n-channel
 * node adds with one sign everywhere, so no cancellation is introduced.
 */
export interface Superposition {
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
export function dropParts(sup: Superposition): void {
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
