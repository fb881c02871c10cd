import type { SyntaxNode, Tree } from "@lezer/common";
import type { EvalFunction } from "mathjs/number";
import { checkConnectivity } from "./connectivity";
import { DiagnosticSink, LineIndex } from "./diagnostics";
import {
  BUILTINS,
  buildExpr,
  type CallExpr,
  containsError,
  evaluateNumber,
  type Expr,
  ExprCompiler,
  FUNCTIONS,
  inferDim,
  type InterpExpr,
  isBad,
  LayeredScope,
  type NameExpr,
  PROBE_FUNCTIONS,
  walk,
} from "./expr";
import type {
  Binding,
  BindingTarget,
  ElaborationResult,
  Mismatch,
  Model,
  Network,
  ParamDef,
  Probe,
  ProbeContext,
  RailDef,
  Settings,
  Span,
  Sweep,
} from "./network";
import { NFET, PFET, SUBSTRATE } from "./network";
import { parser } from "./parser";
import * as T from "./parser.terms";
import { pointScope, thermalVoltage } from "./point";
import { reportSyntaxErrors } from "./syntax";
import {
  AMPERE,
  compatible,
  describeDim,
  DIMENSIONLESS,
  type Dim,
  hasUnit,
  KELVIN,
  LOOSE,
  sameDim,
  VOLT,
} from "./units";

/** Bounds on the work of one elaboration; exceeding one is an error, never a hang. */
export interface Limits {
  /** Longest source text, in UTF-16 code units. */
  maxSourceLength: number;
  /** Most elaborated devices. */
  maxDevices: number;
  /** Most rails, injects and probes (each). */
  maxElements: number;
  /** Most statement executions plus loop iterations, over the whole file. */
  maxWork: number;
  /** Deepest expression nesting. */
  maxExpressionDepth: number;
  /** Deepest nesting of for blocks. */
  maxLoopDepth: number;
  /** Most diagnostics kept. */
  maxDiagnostics: number;
  /** Most values in one sweep. */
  maxSweepValues: number;
  /** Most solves: grid points times mismatch runs. */
  maxPoints: number;
}

export const DEFAULT_LIMITS: Readonly<Limits> = {
  maxSourceLength: 2 * 1024 * 1024,
  maxDevices: 2_000_000,
  maxElements: 2_000_000,
  maxWork: 20_000_000,
  maxExpressionDepth: 200,
  maxLoopDepth: 64,
  maxDiagnostics: 1000,
  maxSweepValues: 100_000,
  maxPoints: 1_000_000,
};

export interface ElaborateOptions {
  limits?: Partial<Limits>;
}

const DEFAULT_W = 1e-6;
const DEFAULT_L = 1e-6;
const SETTINGS = ["kappa", "temp", "i0", "vt0", "ispec", "model"] as const;
type SettingName = (typeof SETTINGS)[number];
const RESERVED_HINT = "built-in names: ut, kappa, temp, pi, e";

/** Names by index (a string array, or a NameColumn). */
interface NameSource {
  readonly length: number;
  at(i: number): string | undefined;
}

/**
 * Device names: a string, or a shape and its piece values made into the
 * string only when asked (most device names are never read while elaborating).
 * `at(i)` is the same string the shape's template makes for those values.
 */
class NameColumn implements NameSource {
  /** Shape id, or -1 when `a` indexes `strings`. */
  private readonly shape = new IntColumn();
  private readonly a = new IntColumn();
  private readonly b = new IntColumn();
  private readonly strings: string[] = [];
  private readonly made: string[] = [];

  constructor(private readonly shapes: readonly Shape[]) {}

  get length(): number {
    return this.shape.length;
  }

  pushName(name: string): void {
    this.shape.push(-1);
    this.a.push(this.strings.length);
    this.b.push(0);
    this.strings.push(name);
  }

  pushPieces(shape: number, a: number, b: number): void {
    this.shape.push(shape);
    this.a.push(a);
    this.b.push(b);
  }

  reserve(n: number): void {
    this.shape.reserve(n);
    this.a.reserve(n);
    this.b.reserve(n);
  }

  at(i: number): string | undefined {
    if (i < 0 || i >= this.shape.length) return undefined;
    if (i < this.made.length) return this.made[i];
    const sh = this.shape.data[i];
    const name =
      sh < 0 ? this.strings[this.a.data[i]] : shapeName(this.shapes[sh].lits, this.a.data[i], this.b.data[i]);
    if (i === this.made.length) this.made.push(name); // read in order (filling a Map): kept
    return name;
  }

  /** Every name, as one array (made once, then extended). */
  all(): string[] {
    for (let i = this.made.length; i < this.shape.length; i++) this.at(i);
    return this.made;
  }
}

/** The name of shape lits (one or two pieces) for piece values a, b. */
function shapeName(lits: string[], a: number, b: number): string {
  return lits.length === 2 ? lits[0] + a + lits[1] : lits[0] + a + lits[1] + b + lits[2];
}

/**
 * A name → index Map filled on demand from a names array (names are unique):
 * names[0, filled) are in it, in order.
 */
class LazyIndex {
  private readonly map = new Map<string, number>();
  private filled = 0;

  constructor(private readonly names: NameSource) {}

  /** Names not yet in the Map. */
  pending(): boolean {
    return this.filled < this.names.length;
  }

  /** The Map without the pending names. */
  partial(): Map<string, number> {
    return this.map;
  }

  full(): Map<string, number> {
    const n = this.names;
    for (let i = this.filled; i < n.length; i++) this.map.set(n.at(i)!, i);
    this.filled = n.length;
    return this.map;
  }
}

/**
 * Growable Int32 column. The three column classes stay separate on purpose: one
 * class generic over the array type would make push() polymorphic in the
 * per-device loop (src/solver/build.ts, off the hot path, uses a generic one).
 */
class IntColumn {
  data = new Int32Array(256);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const d = new Int32Array(this.data.length * 2);
      d.set(this.data);
      this.data = d;
    }
    this.data[this.length++] = v;
  }
  /** Makes room for `n` values in all (no copy later while they are pushed). */
  reserve(n: number): void {
    if (n <= this.data.length) return;
    const d = new Int32Array(n);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  /** The values; the column is not used after. */
  finish(): Int32Array {
    return this.length === this.data.length ? this.data : this.data.slice(0, this.length);
  }
}

/** Growable Uint8 column. */
class ByteColumn {
  data = new Uint8Array(256);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const d = new Uint8Array(this.data.length * 2);
      d.set(this.data);
      this.data = d;
    }
    this.data[this.length++] = v;
  }
  reserve(n: number): void {
    if (n <= this.data.length) return;
    const d = new Uint8Array(n);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  /** The values; the column is not used after. */
  finish(): Uint8Array {
    return this.length === this.data.length ? this.data : this.data.slice(0, this.length);
  }
}

/** Growable Float64 column. */
class FloatColumn {
  data = new Float64Array(256);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const d = new Float64Array(this.data.length * 2);
      d.set(this.data);
      this.data = d;
    }
    this.data[this.length++] = v;
  }
  /** Makes room for `n` values in all. */
  reserve(n: number): void {
    if (n <= this.data.length) return;
    const d = new Float64Array(n);
    d.set(this.data.subarray(0, this.length));
    this.data = d;
  }
  /** The values; the column is not used after. */
  finish(): Float64Array {
    return this.length === this.data.length ? this.data : this.data.slice(0, this.length);
  }
}

/** A compiled value expression (one per syntax node, evaluated per loop iteration). */
interface ValueTpl {
  from: number;
  to: number;
  fn: EvalFunction | null;
  isConstant: boolean;
  constant: number;
  /** Reads a loop variable: evaluated each iteration. */
  loopDependent: boolean;
  /** Loop variables in scope where it was compiled (outermost first). */
  loopNames: string[];
  /** Params / temp / ut / kappa it depends on, transitively; null if none. */
  pointDeps: string[] | null;
  dim: Dim;
  cached: boolean;
  cachedValue: number;
}

/** A name, possibly with `{expr}` pieces. */
interface NameTpl {
  from: number;
  to: number;
  fixed: string | null;
  /**
   * Literal strings alternate with pieces. A piece with `slot` >= 0 is the loop
   * value in that slot plus `offset` (the forms k, k+3, k-1), evaluated
   * without math.js; with slot -1 it is `value` evaluated in scope.
   */
  parts: (string | NamePiece)[];
  /** Shared by every template with the same literal parts; null for a fixed name. */
  shape: Shape | null;
  /** The pieces of `parts` in order (empty for a fixed name). */
  pieces: NamePiece[];
  /** For a fixed name: its node once made or found (nodes are never removed), else -1. */
  fixedNode: number;
}

interface NamePiece {
  value: ValueTpl;
  slot: number;
  offset: number;
}

/**
 * The literal parts of an interpolated name: `n{i}_{j+1}` has lits
 * ["n", "_", ""]. Names of one shape differ only in their whole-number
 * pieces, so a shape with one or two pieces keeps the node and the device
 * index of names already made by their piece values (`node`, `dev`).
 */
interface Shape {
  lits: string[];
  node: PieceIndex | null;
  dev: PieceIndex | null;
  /** Index into the elaborator's shape list (for the per-node namespace check). */
  id: number;
}

interface DeviceTpl {
  k: "device";
  type: typeof NFET | typeof PFET;
  at: number;
  name: NameTpl;
  nodes: (NameTpl | null)[]; // gate, source, drain, bulk/well
  w: ValueTpl | null;
  l: ValueTpl | null;
  broken: boolean;
}
interface InjectTpl {
  k: "inject";
  at: number;
  name: NameTpl;
  from: NameTpl | null;
  to: NameTpl | null;
  value: ValueTpl | null;
  broken: boolean;
}
interface RailTpl {
  k: "rail";
  at: number;
  end: number;
  name: NameTpl;
  value: ValueTpl | null;
}
interface ProbeArgTpl {
  kind: "voltage" | "current";
  name: NameTpl;
}
interface ProbeTpl {
  k: "probe";
  at: number;
  end: number;
  name: NameTpl;
  fn: EvalFunction | null;
  loopNames: string[];
  args: ProbeArgTpl[];
}
interface ForTpl {
  k: "for";
  from: number;
  to: number;
  variable: string;
  slot: number;
  first: ValueTpl | null;
  last: ValueTpl | null;
  rangeFrom: number;
  rangeTo: number;
  body: Tpl[];
}
type Tpl = DeviceTpl | InjectTpl | RailTpl | ProbeTpl | ForTpl;

interface ParamInfo {
  def: ParamDef;
  dim: Dim;
  deps: string[];
}

interface PendingProbe {
  name: string;
  span: Span;
  fn: EvalFunction;
  loopNames: string[];
  loopValues: number[];
  args: { kind: "voltage" | "current"; name: string; from: number; to: number }[];
}

interface PendingSweep {
  param: string;
  nameFrom: number;
  nameTo: number;
  values: number[];
  log: boolean;
  span: Span;
  dim: Dim;
  dimFrom: number;
  dimTo: number;
}

class Aborted extends Error {}

function fmt(v: number): string {
  if (Number.isNaN(v)) return "not a number";
  if (!Number.isFinite(v)) return v > 0 ? "infinite" : "-infinite";
  const r = Number(v.toPrecision(6));
  const a = Math.abs(r);
  return a === 0 || (a >= 1e-3 && a < 1e6) ? String(r) : r.toExponential();
}

/** Rounds away binary noise (0.30000000000000004) while keeping 12 significant digits. */
function tidy(v: number): number {
  return v === 0 ? 0 : Number(v.toPrecision(12));
}

function editDistance(a: string, b: string): number {
  if (Math.abs(a.length - b.length) > 2) return 3;
  const row = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = row[0];
    row[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const cur = row[j];
      row[j] = Math.min(row[j] + 1, row[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = cur;
    }
  }
  return row[b.length];
}

/** "did you mean 'x'?" for a close candidate: distance 1 for names of 3-4 characters, 2 for longer ones. */
function suggest(name: string, candidates: Iterable<string>): string | undefined {
  if (name.length > 40 || name.length < 3) return undefined;
  const limit = name.length <= 4 ? 1 : 2;
  let best: string | undefined;
  let bestD = limit + 1;
  for (const c of candidates) {
    if (c.length < 2) continue;
    const d = editDistance(name, c);
    if (d < bestD) {
      best = c;
      bestD = d;
    }
  }
  return best === undefined ? undefined : `did you mean '${best}'?`;
}

/**
 * A name piece of the form `k`, `k + 3` or `k - 1` (k a loop variable, the
 * constant a whole number below 2^31 without unit): its loop slot and offset,
 * so it is evaluated without math.js. Slot -1 for any other piece.
 */
function loopOffset(p: Expr, loopVars: string[]): { slot: number; offset: number } {
  if (p.k === "name") return { slot: loopVars.indexOf(p.name), offset: 0 };
  if (p.k !== "binary" || p.args.length !== 2) return { slot: -1, offset: 0 };
  const [left, right] = p.args;
  const op = p.ops[0].op;
  if ((op === "+" || op === "-") && left.k === "name" && right.k === "num") {
    const slot = loopVars.indexOf(left.name);
    const c = right.value;
    if (slot >= 0 && right.unit === "" && Number.isInteger(c) && c >= 0 && c < 2 ** 31)
      return { slot, offset: op === "+" ? c : -c };
  }
  return { slot: -1, offset: 0 };
}

function fixedTpl(from: number, to: number, name: string): NameTpl {
  return { from, to, fixed: name, parts: [], shape: null, pieces: [], fixedNode: -1 };
}

/** Largest piece value a PieceIndex holds, and most entries all of one elaboration's indexes hold. */
const PIECE_BOUND = 1 << 22;
const PIECE_BUDGET = 16_000_000;

/**
 * Indices (of nodes or devices) by the one or two whole-number pieces of names
 * of one shape, in dense Int32 rows (index + 1; 0 unknown). Invariant: an
 * entry is stored only after the name it stands for has that index, and
 * indices never change, so a hit is exact; a miss says nothing.
 */
class PieceIndex {
  /** False once a name of this shape was made without being stored here (devices only). */
  complete = true;
  /** The shape was compared with the other shapes of its kind. */
  registered = false;
  /** Size of kindByName when `kindClash` was worked out (devices only; -1 never). */
  kindSize = -1;
  kindClash = true;
  private one: Int32Array = new Int32Array(0);
  private readonly rows: Int32Array[] = [];

  constructor(
    readonly pieces: number,
    private readonly budget: { left: number },
  ) {}

  /** Index for piece values a (and b with two pieces), both in [0, PIECE_BOUND); -1 when unknown. */
  get(a: number, b: number): number {
    if (this.pieces === 1) return a < this.one.length ? this.one[a] - 1 : -1;
    const row = a < this.rows.length ? this.rows[a] : undefined;
    return row !== undefined && b < row.length ? row[b] - 1 : -1;
  }

  /** Stores an index; false when the values are out of bound or the budget is spent. */
  set(a: number, b: number, index: number): boolean {
    if (a >= PIECE_BOUND || b >= PIECE_BOUND) return false;
    if (this.pieces === 1) {
      if (a >= this.one.length) {
        const grown = this.grow(this.one, a);
        if (!grown) return false;
        this.one = grown;
      }
      this.one[a] = index + 1;
      return true;
    }
    let row = a < this.rows.length ? this.rows[a] : undefined;
    if (row === undefined || b >= row.length) {
      const grown = this.grow(row ?? new Int32Array(0), b);
      if (!grown) return false;
      while (this.rows.length <= a) this.rows.push(EMPTY_ROW);
      this.rows[a] = row = grown;
    }
    row[b] = index + 1;
    return true;
  }

  private grow(old: Int32Array, need: number): Int32Array | null {
    const size = Math.min(PIECE_BOUND, Math.max(need + 1, old.length * 2, 16));
    if (this.budget.left < size - old.length) return null;
    this.budget.left -= size - old.length;
    const d = new Int32Array(size);
    d.set(old);
    return d;
  }
}
const EMPTY_ROW: Int32Array = new Int32Array(0);
/** Most name shapes compared with each other, per kind (nodes, devices); beyond, names are looked up as strings. */
const SHAPES_TRACKED = 256;
/** Most rail, inject, probe and param names compared with a device name shape; beyond, every device looks its name up. */
const KIND_SCAN = 64;
/** Fixed device names compared with device name shapes; beyond this many, every shape looks names up. */
const FIXED_SEEN = 256;

/**
 * False only when no string can be a name of both shapes (a fixed name is a
 * shape of one literal). A name of shape lits is lits[0] D lits[1] D … with D
 * a non-empty run of digits; compared here: the literal before the first piece,
 * the literal after the last, and the length of a fixed name.
 */
function mayShareName(a: string[], b: string[]): boolean {
  if (a.length === 1 && b.length === 1) return a[0] === b[0];
  if (a.length === 1 && a[0].length < minLength(b)) return false;
  if (b.length === 1 && b[0].length < minLength(a)) return false;
  return (
    endsAgree(a[0], a.length > 1, b[0], b.length > 1, false) &&
    endsAgree(a[a.length - 1], a.length > 1, b[b.length - 1], b.length > 1, true)
  );
}

function minLength(lits: string[]): number {
  let n = lits.length - 1;
  for (const l of lits) n += l.length;
  return n;
}

/** Whether literal x (then a digit when dx) and y (then a digit when dy) agree at every position both fix; from the end when fromEnd. */
function endsAgree(x: string, dx: boolean, y: string, dy: boolean, fromEnd: boolean): boolean {
  const n = Math.min(x.length + (dx ? 1 : 0), y.length + (dy ? 1 : 0));
  for (let i = 0; i < n; i++) {
    const cx = i < x.length ? x.charCodeAt(fromEnd ? x.length - 1 - i : i) : -1;
    const cy = i < y.length ? y.charCodeAt(fromEnd ? y.length - 1 - i : i) : -1;
    if (cx === cy) continue;
    if (cx === -1 ? !isDigit(cy) : cy === -1 ? !isDigit(cx) : true) return false;
  }
  return true;
}

/**
 * Reads `name` as a name of shape lits (one or two pieces): 1 with the piece
 * values in out; 0 when it is not such a name or a piece is not below
 * PIECE_BOUND; -1 when the shape does not read unambiguously (a literal after
 * a piece that is empty between pieces or starts with a digit).
 */
function readPieces(name: string, lits: string[], out: number[]): number {
  const n = lits.length - 1;
  if (n < 1 || n > 2) return -1;
  for (let k = 1; k <= n; k++) {
    const l = lits[k];
    if ((k < n && l.length === 0) || (l.length > 0 && isDigit(l.charCodeAt(0)))) return -1;
  }
  if (!name.startsWith(lits[0])) return 0;
  let pos = lits[0].length;
  for (let k = 0; k < n; k++) {
    let q = pos;
    while (q < name.length && isDigit(name.charCodeAt(q))) q++;
    if (q === pos || q - pos > 7 || (q - pos > 1 && name.charCodeAt(pos) === 48)) return 0;
    const v = Number(name.slice(pos, q));
    if (v >= PIECE_BOUND) return 0;
    out[k] = v;
    const l = lits[k + 1];
    if (!name.startsWith(l, q)) return 0;
    pos = q + l.length;
  }
  return pos === name.length ? 1 : 0;
}

function isDigit(c: number): boolean {
  return c === -1 || (c >= 48 && c <= 57);
}

const PIN_SETS = {
  nfet: { required: ["gate", "source", "drain"], optional: ["bulk", "w", "l"] },
  pfet: { required: ["gate", "source", "drain", "well"], optional: ["w", "l"] },
  inject: { required: ["from", "to", "value"], optional: [] as string[] },
};

class Elaborator {
  readonly sink: DiagnosticSink;
  readonly lines: LineIndex;
  private readonly compiler = new ExprCompiler();
  private readonly scope = new Map<string, number>();
  private tree!: Tree;

  // Pre-scan of the top level.
  private readonly paramDecl = new Map<string, number>();
  /** First top-level `rail NAME` (a plain name) of each name: the name's first declaration may be a rail. */
  private readonly railDecl = new Map<string, number>();
  private readonly setDecl = new Map<string, { from: number; to: number }>();
  private readonly swept = new Set<string>();
  private readonly brokenNames = new Set<string>();
  /** Built-in names a rail statement tried to declare (reported there, not at every pin). */
  private readonly reservedRails = new Set<string>();
  /** Kind of every rail, inject, probe and param name made so far ("a rail", ...): one namespace. */
  private readonly kindByName = new Map<string, string>();
  /** Where each name of `kindByName` was declared (offset of its name). */
  private readonly declAt = new Map<string, number>();

  private name: string | null = null;
  private readonly settings: Settings = {
    kappa: 0.7,
    temp: 300,
    ut: thermalVoltage(300),
    i0: 1e-15,
    vt0: null,
    ispec: null,
    model: "weak",
  };
  private readonly settingAt = new Map<SettingName, Span>();
  private kappaDeps: string[] = [];
  private readonly params = new Map<string, ParamInfo>();
  private readonly paramList: ParamDef[] = [];

  // Name shapes (see Shape).
  private readonly shapes = new Map<string, Shape>();
  private readonly shapeList: Shape[] = [];

  // Nodes.
  private readonly nodeNames = new NameColumn(this.shapeList);
  /**
   * Filled on demand. Invariant: a node not yet in it was made through the
   * PieceIndex of a shape that was complete then, and is in that index.
   */
  private readonly nodes = new LazyIndex(this.nodeNames);
  /** Shapes of interpolated node names made so far (registered), and fixed node names (up to FIXED_SEEN). */
  private readonly nodeShapes: Shape[] = [];
  private readonly nodeShapeSet = new Set<Shape>();
  private readonly fixedNodeNames: string[] = [];
  private fixedNodeOverflow = false;
  /** More than SHAPES_TRACKED node shapes: no shape is complete any more. */
  private nodeShapesOff = false;
  private readonly pieceOut = [0, 0];
  private readonly railValue = new FloatColumn();
  private readonly isRail = new ByteColumn();
  private readonly nodeFrom = new IntColumn();
  private readonly nodeTo = new IntColumn();
  private readonly suppressed = new Set<number>();
  private readonly rails: RailDef[] = [];
  /** Shape id of the template that made each node through its PieceIndex, -1 otherwise. */
  private readonly nodeShape = new IntColumn();

  // Name shapes (see Shape).
  private readonly pieceBudget = { left: PIECE_BUDGET };
  /** Shapes of interpolated device names made so far, and fixed device names (up to FIXED_SEEN). */
  private readonly devShapes: Shape[] = [];
  private readonly fixedDevNames: string[] = [];
  private fixedDevOverflow = false;
  /** More than SHAPES_TRACKED device shapes: no shape is complete any more. */
  private devShapesOff = false;
  /** Piece values of the last name `pieceName` made through a PieceIndex. */
  private pieceA = 0;
  private pieceB = 0;

  // Devices.
  private readonly devNames = new NameColumn(this.shapeList);
  /** Filled on demand: devices whose name no other shape can give need no look-up while elaborating. */
  private readonly devs = new LazyIndex(this.devNames);
  private readonly devType = new ByteColumn();
  private readonly gate = new IntColumn();
  private readonly source = new IntColumn();
  private readonly drain = new IntColumn();
  private readonly bulk = new IntColumn();
  private readonly w = new FloatColumn();
  private readonly l = new FloatColumn();
  private readonly devAt = new IntColumn();

  // Injects.
  private readonly injNames: string[] = [];
  private readonly injIndex = new Map<string, number>();
  private readonly injFrom = new IntColumn();
  private readonly injTo = new IntColumn();
  private readonly injValue = new FloatColumn();
  private readonly injAt = new IntColumn();

  private readonly probeNames = new Map<string, number>();
  private readonly pendingProbes: PendingProbe[] = [];
  private readonly pendingSweeps: PendingSweep[] = [];
  private mismatch: Mismatch | null = null;
  private readonly bindings: Binding[] = [];

  // Loop state.
  private readonly loopValues: number[] = [];
  private work = 0;
  private outerFor: Span | null = null;
  /** The innermost running loop's variable (for hints). */
  private loopVar = "k";
  private syntaxErrors = 0;
  private aborted = false;

  constructor(
    private readonly text: string,
    private readonly limits: Limits,
  ) {
    this.sink = new DiagnosticSink(text, limits.maxDiagnostics);
    this.lines = new LineIndex(text);
    this.scope.set("temp", this.settings.temp);
    this.scope.set("ut", this.settings.ut);
    this.scope.set("kappa", this.settings.kappa);
    this.scope.set("pi", Math.PI);
    this.scope.set("e", Math.E);
  }

  private src(n: { from: number; to: number }): string {
    return this.text.slice(n.from, n.to);
  }

  private line(offset: number): number {
    return this.lines.position(offset).line;
  }

  run(): ElaborationResult {
    this.tree = parser.parse(this.text);
    this.syntaxErrors = reportSyntaxErrors(
      this.tree,
      this.text,
      this.sink,
      this.lines,
      this.limits.maxDiagnostics,
      this.limits.maxExpressionDepth,
    );
    const top = this.tree.topNode;
    const statements = this.children(top);
    this.prescan(statements);
    try {
      statements.forEach((s, i) => this.topStatement(s, i));
      this.finish();
    } catch (e) {
      if (!(e instanceof Aborted)) throw e;
      this.aborted = true;
    }
    return this.result();
  }

  private children(node: SyntaxNode): SyntaxNode[] {
    const out: SyntaxNode[] = [];
    for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Statement")) out.push(c);
    return out;
  }

  private prescan(statements: SyntaxNode[]): void {
    for (const s of statements) {
      if (s.type.id === T.ParamStatement) {
        const d = s.getChild("Definition");
        if (d && !this.paramDecl.has(this.src(d))) this.paramDecl.set(this.src(d), d.from);
      } else if (s.type.id === T.RailStatement) {
        const d = s.getChild("Definition");
        if (d && !d.getChild("InterpolatedName") && !this.railDecl.has(this.src(d)))
          this.railDecl.set(this.src(d), d.from);
      } else if (s.type.id === T.SetStatement) {
        const n = s.getChild("SettingName");
        if (n && !this.setDecl.has(this.src(n))) this.setDecl.set(this.src(n), { from: s.from, to: s.to });
      } else if (s.type.id === T.SweepStatement) {
        const n = s.getChild("Identifier");
        if (n) this.swept.add(this.src(n));
      }
    }
  }

  /** A statement with its own syntax error is skipped; the names it mentions silence follow-up errors. */
  private broken(s: SyntaxNode): boolean {
    if (s.type.id === T.ForStatement) {
      const block = s.getChild("Block");
      if (!block || block.lastChild?.name !== "}") return true;
      for (let c = s.firstChild; c && c !== block && c.from < block.from; c = c.nextSibling)
        if (containsError(c) || c.type.isError) return true;
      return false;
    }
    return containsError(s);
  }

  private noteBroken(s: SyntaxNode): void {
    const cur = s.cursor();
    let depth = 0;
    for (;;) {
      if (cur.name === "Identifier" || cur.name === "Definition") {
        const name = this.text.slice(cur.from, cur.to);
        this.brokenNames.add(name);
        const node = this.findNode(name);
        if (node !== undefined) this.suppressed.add(node);
      }
      if (cur.firstChild()) {
        depth++;
        continue;
      }
      for (;;) {
        if (depth === 0) return;
        if (cur.nextSibling()) break;
        cur.parent();
        depth--;
      }
    }
  }

  // ---------------------------------------------------------------- top level

  private topStatement(s: SyntaxNode, index: number): void {
    if (this.broken(s)) {
      this.noteBroken(s);
      return;
    }
    switch (s.type.id) {
      case T.NetworkStatement:
        return this.networkStatement(s, index);
      case T.SetStatement:
        return this.setStatement(s);
      case T.ParamStatement:
        return this.paramStatement(s);
      case T.SweepStatement:
        return this.sweepStatement(s);
      case T.MismatchStatement:
        return this.mismatchStatement(s);
      default: {
        const t = this.compileStatement(s, []);
        if (!t) return this.noteBroken(s);
        if (t.k === "for") {
          this.outerFor = { from: t.from, to: t.to };
          this.reserveDevices(t);
        }
        this.exec([t]);
        this.outerFor = null;
      }
    }
  }

  private networkStatement(s: SyntaxNode, index: number): void {
    const d = s.getChild("Definition")!;
    if (d.getChild("InterpolatedName")) {
      this.sink.error(d.from, d.to, "a network name cannot have {…} pieces");
      return;
    }
    if (this.name !== null) {
      this.sink.error(s.from, s.to, "the network is already named", "one network statement per file");
      return;
    }
    if (index !== 0) {
      this.sink.error(
        s.firstChild!.from,
        s.firstChild!.to,
        "'network' must be the first statement",
        "move it to the top of the file",
      );
    }
    this.name = this.src(d);
  }

  private setStatement(s: SyntaxNode): void {
    const n = s.getChild("SettingName")!;
    const name = this.src(n);
    const valueNode = this.exprChild(s);
    if (!(SETTINGS as readonly string[]).includes(name)) {
      this.sink.error(
        n.from,
        n.to,
        `unknown setting '${name}'`,
        suggest(name, SETTINGS) ?? `settings: ${SETTINGS.join(", ")}`,
      );
      return;
    }
    const setting = name as SettingName;
    const earlier = this.settingAt.get(setting);
    if (earlier) {
      this.sink.error(
        n.from,
        n.to,
        `${name} is set twice (first on line ${this.line(earlier.from)})`,
        "keep one set statement per setting",
      );
      return;
    }
    this.settingAt.set(setting, { from: s.from, to: s.to });
    if (!valueNode) return;
    if (setting === "model") {
      const v = this.src(valueNode);
      if (valueNode.type.id !== T.Identifier || (v !== "weak" && v !== "ekv")) {
        this.sink.error(
          valueNode.from,
          valueNode.to,
          `model is 'weak' or 'ekv', not '${v}'`,
          "set model = weak (the default) or set model = ekv",
        );
        return;
      }
      this.settings.model = v as Model;
      return;
    }
    const expect: Record<Exclude<SettingName, "model">, [Dim, string]> = {
      kappa: [DIMENSIONLESS, "kappa is a plain number"],
      temp: [KELVIN, "temp is a temperature in kelvin"],
      i0: [AMPERE, "i0 is a current in amperes"],
      vt0: [VOLT, "vt0 is a voltage in volts"],
      ispec: [AMPERE, "ispec is a current in amperes"],
    };
    const [dim, what] = expect[setting];
    const t = this.compileValue(valueNode, [], dim, what);
    if (!t) return;
    const v = this.valueOf(t);
    const bad = (msg: string, hint?: string) => this.sink.error(t.from, t.to, msg, hint);
    switch (setting) {
      case "kappa":
        if (!(v > 0 && v <= 1))
          return bad(`kappa must lie between 0 and 1, but it is ${fmt(v)}`, "typical values are 0.6 to 0.8");
        this.settings.kappa = v;
        this.scope.set("kappa", v);
        this.kappaDeps = t.pointDeps ?? [];
        break;
      case "temp": {
        if (!(v > 0 && Number.isFinite(v)))
          return bad(
            `temp must be a positive temperature in kelvin, but it is ${fmt(v)}`,
            "for example set temp = 300K",
          );
        const s2 = this.sweptDep(t);
        if (s2)
          return bad(`temp cannot depend on '${s2}', which is swept`, "to vary the temperature, write sweep temp ...");
        if (v < 150)
          this.sink.warning(
            t.from,
            t.to,
            `temp is ${fmt(v)} K: temperatures are in kelvin`,
            "room temperature is about 300K",
          );
        this.settings.temp = v;
        this.settings.ut = thermalVoltage(v);
        this.scope.set("temp", v);
        this.scope.set("ut", this.settings.ut);
        return;
      }
      case "i0":
      case "ispec":
        if (!(v > 0 && Number.isFinite(v)))
          return bad(
            `${setting} must be a positive current, but it is ${fmt(v)}`,
            `for example set ${setting} = ${setting === "i0" ? "1f" : "100n"}`,
          );
        this.settings[setting] = v;
        break;
      case "vt0":
        if (!Number.isFinite(v)) return bad(`vt0 must be a finite voltage, but it is ${fmt(v)}`);
        this.settings.vt0 = v;
        break;
    }
    this.bind(t, { kind: "setting", name: setting });
  }

  private paramStatement(s: SyntaxNode): void {
    const d = s.getChild("Definition")!;
    const name = this.src(d);
    const valueNode = this.exprChild(s);
    if (d.getChild("InterpolatedName")) {
      this.sink.error(d.from, d.to, "a param name cannot have {…} pieces");
      return;
    }
    if (!this.checkValueName(name, d.from, d.to, "param")) return;
    const prev = this.params.get(name);
    if (prev) {
      this.sink.error(
        d.from,
        d.to,
        `param '${name}' is defined twice (first on line ${this.line(prev.def.span.from)})`,
      );
      return;
    }
    // One namespace: a name declared before as a rail, inject, probe or device keeps that
    // meaning (uses above resolve to it), and this later declaration is the error.
    const other = this.kindByName.get(name) ?? (this.devHas(name, null) ? "a device" : undefined);
    if (other) {
      this.clash("param", name, d, other);
      return;
    }
    this.declare(name, "a param", d.from);
    if (!valueNode) return;
    const t = this.compileValue(valueNode, [], null, "");
    if (!t) {
      this.brokenNames.add(name);
      return;
    }
    const v = this.valueOf(t);
    if (!Number.isFinite(v)) {
      this.sink.error(
        t.from,
        t.to,
        `param '${name}' is ${fmt(v)}`,
        "check for a division by zero or the log or sqrt of a negative number",
      );
      this.brokenNames.add(name);
      return;
    }
    const fn = t.fn;
    const def: ParamDef = { name, value: v, span: { from: d.from, to: d.to } };
    if (t.pointDeps && fn) {
      def.dependsOn = t.pointDeps;
      def.evaluate = (scope) => evaluateNumber(fn, scope);
    }
    this.params.set(name, { def, dim: t.dim, deps: t.pointDeps ?? [] });
    this.paramList.push(def);
    this.scope.set(name, v);
  }

  /**
   * Offset of a param not defined yet whose statement is the name's first declaration
   * (a rail declared above that param keeps the name: the param is then the duplicate).
   */
  private laterParam(name: string): number | undefined {
    if (this.params.has(name)) return undefined;
    const at = this.paramDecl.get(name);
    if (at === undefined) return undefined;
    const rail = this.railDecl.get(name);
    return rail !== undefined && rail < at ? undefined : at;
  }

  /** Offset of the statement that made the device `name`, if there is one. */
  private devDeclAt(name: string): number | undefined {
    const i = this.devs.full().get(name);
    return i === undefined ? undefined : this.devAt.data[i];
  }

  /** A param or loop-variable name must not hide a built-in, a function or an object property. */
  private checkValueName(name: string, from: number, to: number, what: string): boolean {
    if (name in BUILTINS || (SETTINGS as readonly string[]).includes(name)) {
      this.sink.error(from, to, `'${name}' is a built-in name and cannot be a ${what}`, RESERVED_HINT);
      return false;
    }
    if (name in FUNCTIONS || PROBE_FUNCTIONS.has(name)) {
      this.sink.error(from, to, `'${name}' is a function name and cannot be a ${what}`);
      return false;
    }
    if (name in Object.prototype || name.startsWith("__")) {
      this.sink.error(from, to, `'${name}' cannot be used as a ${what} name`);
      return false;
    }
    return true;
  }

  private sweepStatement(s: SyntaxNode): void {
    const n = s.getChild("Identifier")!;
    const param = this.src(n);
    const span = { from: s.from, to: s.to };
    const range = s.getChild("SweepRange");
    const list = s.getChild("SweepList");
    const values: number[] = [];
    let log = false;
    let dim: Dim = LOOSE;
    let dimFrom = s.from;
    let dimTo = s.to;
    const compile = (node: SyntaxNode | null): ValueTpl | null => {
      if (!node) return null;
      const t = this.compileValue(node, [], null, "");
      if (!t) return null;
      const sw = this.sweptDep(t);
      if (sw) {
        this.sink.error(t.from, t.to, `sweep values cannot depend on '${sw}', which is swept`);
        return null;
      }
      if (!compatible(dim, t.dim)) {
        this.sink.error(
          t.from,
          t.to,
          `this value is ${describeDim(t.dim)}, but the other values of the sweep are ${describeDim(dim)}`,
        );
        return null;
      }
      if (t.dim.kind === "known" && dim.kind !== "known") {
        dim = t.dim;
        dimFrom = t.from;
        dimTo = t.to;
      }
      return t;
    };
    const finite = (t: ValueTpl): number | null => {
      const v = this.valueOf(t);
      if (!Number.isFinite(v)) {
        this.sink.error(t.from, t.to, `a sweep value must be a finite number, but this is ${fmt(v)}`);
        return null;
      }
      return v;
    };
    if (range) {
      const [aNode, bNode] = this.exprChildren(range);
      const ta = compile(aNode ?? null);
      const tb = compile(bNode ?? null);
      const stepNode = range.getChild("SweepStep");
      const pointsNode = range.getChild("SweepPoints");
      const tc = compile(stepNode ? this.exprChild(stepNode) : pointsNode ? this.exprChild(pointsNode) : null);
      if (!ta || !tb || !tc) return;
      const a = finite(ta);
      const b = finite(tb);
      const c = finite(tc);
      if (a === null || b === null || c === null) return;
      if (stepNode) {
        if (c === 0) return this.sink.error(tc.from, tc.to, "the step of a sweep cannot be 0");
        const count = (b - a) / c;
        if (count < -1e-9) {
          return this.sink.error(
            range.from,
            range.to,
            `reversed range: from ${fmt(a)} to ${fmt(b)} with step ${fmt(c)} never reaches ${fmt(b)}`,
            c > 0
              ? "swap from and to, or use a negative step to sweep downward"
              : "use a positive step to sweep upward",
          );
        }
        const nValues = Math.floor(count + 1e-9) + 1;
        if (!(nValues <= this.limits.maxSweepValues)) {
          return this.sink.error(
            tc.from,
            tc.to,
            `this sweep has ${fmt(nValues)} values, more than the limit of ${this.limits.maxSweepValues}`,
            "use a larger step",
          );
        }
        for (let i = 0; i < nValues; i++) values.push(tidy(a + i * c));
      } else {
        log = pointsNode!.getChild("log") !== null;
        if (!Number.isInteger(c) || c < 1)
          return this.sink.error(
            tc.from,
            tc.to,
            `the number of points must be a whole number of at least 1, not ${fmt(c)}`,
          );
        if (c > this.limits.maxSweepValues)
          return this.sink.error(
            tc.from,
            tc.to,
            `this sweep has ${c} points, more than the limit of ${this.limits.maxSweepValues}`,
          );
        if (c > 1 && a === b)
          return this.sink.error(
            range.from,
            range.to,
            `empty range: from and to are both ${fmt(a)}`,
            "give two different bounds, or use points 1",
          );
        if (log && !(a > 0 && b > 0)) {
          return this.sink.error(
            range.from,
            range.to,
            `a log sweep needs positive bounds, not ${fmt(a)} and ${fmt(b)}`,
            "use linear spacing (drop 'log') for ranges through zero",
          );
        }
        for (let i = 0; i < c; i++) {
          const f = c === 1 ? 0 : i / (c - 1);
          values.push(i === 0 ? a : i === c - 1 ? b : tidy(log ? a * Math.pow(b / a, f) : a + (b - a) * f));
        }
      }
    } else if (list) {
      const items = this.exprChildren(list);
      if (items.length === 0)
        return this.sink.error(list.from, list.to, "empty list: a sweep needs at least one value");
      if (items.length > this.limits.maxSweepValues)
        return this.sink.error(
          list.from,
          list.to,
          `this sweep has ${items.length} values, more than the limit of ${this.limits.maxSweepValues}`,
        );
      for (const item of items) {
        const t = compile(item);
        if (!t) return;
        const v = finite(t);
        if (v === null) return;
        values.push(v);
      }
    } else return;
    if (param === "temp") {
      for (const v of values)
        if (!(v > 0))
          return this.sink.error(
            span.from,
            span.to,
            `a temperature sweep needs positive kelvin values, but one is ${fmt(v)}`,
          );
      const cold = values.find((v) => v < 150);
      if (cold !== undefined)
        this.sink.warning(
          n.from,
          n.to,
          `temp reaches ${fmt(cold)} K: temperatures are in kelvin`,
          "room temperature is about 300K",
        );
    }
    this.pendingSweeps.push({ param, nameFrom: n.from, nameTo: n.to, values, log, span, dim, dimFrom, dimTo });
  }

  private mismatchStatement(s: SyntaxNode): void {
    const kw = s.firstChild!;
    if (this.mismatch) {
      this.sink.error(kw.from, kw.to, `mismatch is given twice (first on line ${this.line(this.mismatch.span.from)})`);
      return;
    }
    const seen = new Map<string, number>();
    let ok = true;
    for (let o = s.getChild("MismatchOption"); o; o = o.nextSibling) {
      if (o.type.id !== T.MismatchOption) continue;
      const key = o.firstChild!;
      const k = this.src(key);
      if (seen.has(k)) {
        this.sink.error(key.from, key.to, `'${k}' is given twice`);
        ok = false;
        continue;
      }
      const node = this.exprChild(o);
      if (!node) continue;
      const dim = k === "avt" ? VOLT : DIMENSIONLESS;
      const what =
        k === "avt" ? "avt is the Pelgrom coefficient in V·µm (write 3.5m for 3.5 mV·µm)" : `${k} is a plain number`;
      const t = this.compileValue(node, [], dim, what);
      if (!t) {
        ok = false;
        continue;
      }
      const sw = this.sweptDep(t);
      if (sw) {
        this.sink.error(t.from, t.to, `${k} cannot depend on '${sw}', which is swept`);
        ok = false;
        continue;
      }
      const v = this.valueOf(t);
      if (k === "runs" && !(Number.isInteger(v) && v >= 1 && v <= this.limits.maxPoints)) {
        this.sink.error(t.from, t.to, `runs must be a whole number from 1 to ${this.limits.maxPoints}, not ${fmt(v)}`);
        ok = false;
      } else if (k === "seed" && !(Number.isSafeInteger(v) && v >= 0)) {
        this.sink.error(t.from, t.to, `seed must be a whole number of at least 0, not ${fmt(v)}`);
        ok = false;
      } else if (k === "avt" && !(v >= 0 && Number.isFinite(v))) {
        this.sink.error(
          t.from,
          t.to,
          `avt must be a positive Pelgrom coefficient in V·µm, not ${fmt(v)}`,
          "for example avt 3.5m (3.5 mV·µm)",
        );
        ok = false;
      }
      seen.set(k, v);
    }
    if (!seen.has("runs") && ok) {
      this.sink.error(kw.from, kw.to, "mismatch needs 'runs N'", "mismatch runs 100 seed 1 avt 3.5m");
      ok = false;
    }
    if (!seen.has("avt") && ok) {
      this.sink.error(
        kw.from,
        kw.to,
        "mismatch needs 'avt A', the Pelgrom coefficient in V·µm",
        "mismatch runs 100 seed 1 avt 3.5m",
      );
      ok = false;
    }
    if (!ok) return;
    this.mismatch = {
      runs: seen.get("runs")!,
      seed: seen.get("seed") ?? 1,
      avt: seen.get("avt")!,
      span: { from: s.from, to: s.to },
    };
  }

  // ---------------------------------------------------------------- compile

  private exprChild(node: SyntaxNode): SyntaxNode | null {
    for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Expression")) return c;
    return null;
  }

  private exprChildren(node: SyntaxNode): SyntaxNode[] {
    const out: SyntaxNode[] = [];
    for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Expression")) out.push(c);
    return out;
  }

  private compileStatement(s: SyntaxNode, loopVars: string[]): Tpl | null {
    switch (s.type.id) {
      case T.DeviceStatement:
        return this.compileDevice(s, loopVars);
      case T.InjectStatement:
        return this.compileInject(s, loopVars);
      case T.RailStatement: {
        const def = s.getChild("Definition")!;
        const fixed = def.getChild("InterpolatedName") ? null : this.src(def);
        if (fixed !== null && fixed in BUILTINS) {
          // One error here; the pins that name it are then taken as this (rejected) node.
          this.sink.error(def.from, def.to, `'${fixed}' is a built-in name and cannot be a rail`, RESERVED_HINT);
          this.reservedRails.add(fixed);
          return null;
        }
        const name = this.compileName(def, loopVars);
        const node = this.exprChild(s);
        const value = node ? this.compileValue(node, loopVars, VOLT, "a rail value is a voltage in volts") : null;
        return name ? { k: "rail", at: s.from, end: s.to, name, value } : null;
      }
      case T.ProbeStatement:
        return this.compileProbe(s, loopVars);
      case T.ForStatement:
        return this.compileFor(s, loopVars);
      default: {
        const kw = s.firstChild!;
        this.sink.error(
          kw.from,
          kw.to,
          `'${this.src(kw)}' belongs at the top level, not inside a for block`,
          "move it above the for statement",
        );
        return null;
      }
    }
  }

  private compileFor(s: SyntaxNode, loopVars: string[]): ForTpl | null {
    const v = s.getChild("VariableName")!;
    const variable = this.src(v);
    const range = s.getChild("Range")!;
    const block = s.getChild("Block")!;
    if (loopVars.length >= this.limits.maxLoopDepth) {
      this.sink.error(s.from, s.firstChild!.to, `for blocks nest deeper than ${this.limits.maxLoopDepth}`);
      return null;
    }
    let ok = this.checkValueName(variable, v.from, v.to, "loop variable");
    if (ok && loopVars.includes(variable)) {
      this.sink.error(
        v.from,
        v.to,
        `loop variable '${variable}' is already used by an enclosing for`,
        "give the inner loop another variable",
      );
      ok = false;
    }
    if (ok && (this.params.has(variable) || this.paramDecl.has(variable))) {
      this.sink.error(
        v.from,
        v.to,
        `loop variable '${variable}' has the name of a param`,
        "give the loop another variable",
      );
      ok = false;
    }
    const [a, b] = this.exprChildren(range);
    const bound = (node: SyntaxNode | undefined): ValueTpl | null => {
      if (!node) return null;
      const t = this.compileValue(node, loopVars, DIMENSIONLESS, "a loop bound is a whole number");
      if (!t) return null;
      const sw = this.sweptDep(t);
      if (sw) {
        this.sink.error(
          t.from,
          t.to,
          `this loop bound depends on '${sw}', which is swept`,
          "a sweep may not change the structure of the network: use a param that is not swept",
        );
        return null;
      }
      return t;
    };
    const first = bound(a);
    const last = bound(b);
    const inner = [...loopVars, variable];
    const body: Tpl[] = [];
    for (const st of this.children(block)) {
      if (this.broken(st)) {
        this.noteBroken(st);
        continue;
      }
      const t = this.compileStatement(st, inner);
      if (t) body.push(t);
      else this.noteBroken(st);
    }
    if (!ok || !first || !last) return null;
    return {
      k: "for",
      from: s.from,
      to: s.to,
      variable,
      slot: loopVars.length,
      first,
      last,
      rangeFrom: range.from,
      rangeTo: range.to,
      body,
    };
  }

  private pins(s: SyntaxNode, kind: "nfet" | "pfet" | "inject"): Map<string, SyntaxNode> {
    const set = PIN_SETS[kind];
    const allowed = [...set.required, ...set.optional];
    const got = new Map<string, SyntaxNode>();
    for (let p = s.getChild("Pin"); p; p = p.nextSibling) {
      if (p.type.id !== T.Pin) continue;
      const keyNode = p.getChild("PinName")!;
      const key = this.src(keyNode);
      const value = this.exprChild(p);
      if (!allowed.includes(key)) {
        let hint = suggest(key, allowed) ?? `${kind} pins: ${allowed.join(", ")}`;
        if (kind === "pfet" && key === "bulk") hint = "a pfet's bulk is its well: write well=NODE";
        if (kind === "nfet" && key === "well")
          hint = "an nfet sits in the substrate; write bulk=NODE for a separate bulk";
        this.sink.error(keyNode.from, keyNode.to, `${kind} has no pin '${key}'`, hint);
        continue;
      }
      if (got.has(key)) {
        this.sink.error(keyNode.from, keyNode.to, `pin '${key}' is given twice`, "give each pin once");
        continue;
      }
      if (value) got.set(key, value);
    }
    return got;
  }

  private missingPins(def: SyntaxNode, kind: "nfet" | "pfet" | "inject", got: Map<string, SyntaxNode>): boolean {
    let missing = false;
    const name = this.src(def);
    for (const key of PIN_SETS[kind].required) {
      if (got.has(key)) continue;
      missing = true;
      if (kind === "pfet" && key === "well") {
        this.sink.error(
          def.from,
          def.to,
          `pfet '${name}' has no well`,
          "add well=NODE: the n-well a pfet sits in, usually the positive rail",
        );
      } else {
        const example = key === "value" ? "value=10n" : `${key}=NODE`;
        this.sink.error(def.from, def.to, `${kind} '${name}' has no ${key} pin`, `add ${example}`);
      }
    }
    return missing;
  }

  private compileDevice(s: SyntaxNode, loopVars: string[]): DeviceTpl | null {
    const kind = s.firstChild!.name === "pfet" ? "pfet" : "nfet";
    const def = s.getChild("Definition")!;
    const name = this.compileName(def, loopVars);
    const pins = this.pins(s, kind);
    let broken = this.missingPins(def, kind, pins) || !name;
    const node = (key: string): NameTpl | null => {
      const v = pins.get(key);
      if (!v) return null;
      const t = this.compileNodeRef(v, key, loopVars);
      if (!t) broken = true;
      return t;
    };
    const nodes = [node("gate"), node("source"), node("drain"), node(kind === "pfet" ? "well" : "bulk")];
    const length = (key: "w" | "l"): ValueTpl | null => {
      const v = pins.get(key);
      if (!v) return null;
      const t = this.compileValue(
        v,
        loopVars,
        "length",
        `${key} is a length in metres and takes no unit symbol (write 2u for 2 µm)`,
      );
      if (!t) broken = true;
      return t;
    };
    const w = length("w");
    const l = length("l");
    return {
      k: "device",
      type: kind === "pfet" ? PFET : NFET,
      at: s.from,
      name: name ?? this.fixedName(def),
      nodes,
      w,
      l,
      broken,
    };
  }

  private compileInject(s: SyntaxNode, loopVars: string[]): InjectTpl | null {
    const def = s.getChild("Definition")!;
    const name = this.compileName(def, loopVars);
    const pins = this.pins(s, "inject");
    let broken = this.missingPins(def, "inject", pins) || !name;
    const ref = (key: string): NameTpl | null => {
      const v = pins.get(key);
      if (!v) return null;
      const t = this.compileNodeRef(v, key, loopVars);
      if (!t) broken = true;
      return t;
    };
    const from = ref("from");
    const to = ref("to");
    const v = pins.get("value");
    const value = v ? this.compileValue(v, loopVars, AMPERE, "an inject value is a current in amperes") : null;
    if (v && !value) broken = true;
    return { k: "inject", at: s.from, name: name ?? this.fixedName(def), from, to, value, broken };
  }

  private fixedName(n: SyntaxNode): NameTpl {
    return fixedTpl(n.from, n.to, this.src(n));
  }

  private compileProbe(s: SyntaxNode, loopVars: string[]): ProbeTpl | null {
    const name = this.compileName(s.getChild("Definition")!, loopVars);
    const node = this.exprChild(s);
    if (!name || !node) return null;
    const args: ProbeArgTpl[] = [];
    const calls = new Map<CallExpr, string>();
    const e = this.build(node);
    let ok = !isBad(e);
    const dim = ok
      ? inferDim(e, {
          name: (n) => this.nameDim(n, loopVars),
          probeCall: (c) => {
            const kind = c.fn as "voltage" | "current";
            if (c.args.length !== 1) {
              this.sink.error(
                c.fnFrom,
                c.fnTo,
                `${kind}() takes one ${kind === "voltage" ? "node" : "device, inject or rail"} name`,
              );
              return null;
            }
            const a = c.args[0];
            if (a.k !== "name" && a.k !== "interp") {
              this.sink.error(
                a.from,
                a.to,
                `${kind}() takes a name, not an expression`,
                kind === "voltage" ? "for example voltage(x3)" : "for example current(m1)",
              );
              return null;
            }
            const t = this.nameTplOf(a, loopVars);
            if (!t) return null;
            calls.set(c, `__runnel_arg${args.length}`);
            args.push({ kind, name: t });
            return kind === "voltage" ? VOLT : AMPERE;
          },
          interp: (i) => this.interpAsValue(i),
          report: (f, t, m, h) => this.sink.error(f, t, m, h),
        })
      : null;
    if (!dim) ok = false;
    if (!ok) return null;
    const fn = this.compiler.compile(e, (c) => calls.get(c)!);
    return { k: "probe", at: s.from, end: s.to, name, fn, loopNames: loopVars, args };
  }

  private build(node: SyntaxNode): Expr {
    let reported = false;
    return buildExpr(node, {
      text: this.text,
      maxDepth: this.limits.maxExpressionDepth,
      tooDeep: (from, to) => {
        if (reported) return;
        reported = true;
        this.sink.error(
          from,
          to,
          `this expression nests deeper than ${this.limits.maxExpressionDepth} levels`,
          "split it with params",
        );
      },
    });
  }

  private interpAsValue(i: InterpExpr): void {
    this.sink.error(
      i.from,
      i.to,
      "a name with {…} pieces can only be a node, device or probe name",
      "in a probe, use it inside voltage() or current()",
    );
  }

  /** The dimension of a plain name in an expression, or null after reporting it. */
  private nameDim(n: NameExpr, loopVars: string[]): Dim | null {
    const name = n.name;
    if (loopVars.includes(name)) return LOOSE;
    const p = this.params.get(name);
    if (p) return p.dim;
    if (name in BUILTINS) {
      const setting = name === "ut" || name === "temp" ? "temp" : name === "kappa" ? "kappa" : null;
      const set = setting ? this.setDecl.get(setting) : undefined;
      if (set && n.from < set.to) {
        this.sink.error(
          n.from,
          n.to,
          `${name} is used before 'set ${setting}' on line ${this.line(set.from)}`,
          `move 'set ${setting}' above the first use of ${name}`,
        );
        return null;
      }
      return BUILTINS[name];
    }
    if (this.brokenNames.has(name)) return null;
    const later = this.laterParam(name);
    if (later !== undefined) {
      this.sink.error(
        n.from,
        n.to,
        `param '${name}' is used before it is defined (line ${this.line(later)})`,
        "move the param statement above this line",
      );
      return null;
    }
    if ((SETTINGS as readonly string[]).includes(name)) {
      this.sink.error(
        n.from,
        n.to,
        `the setting '${name}' cannot be used in an expression`,
        "expressions may use params, loop variables, ut, kappa and temp",
      );
      return null;
    }
    const isDev = this.devHas(name, null);
    if (this.findNode(name) !== undefined || isDev || this.injIndex.has(name)) {
      const what = isDev ? "a device" : this.injIndex.has(name) ? "an inject" : "a node";
      this.sink.error(
        n.from,
        n.to,
        `'${name}' is ${what}, not a value`,
        isDev || this.injIndex.has(name) ? `in a probe, use current(${name})` : `in a probe, use voltage(${name})`,
      );
      return null;
    }
    const candidates = [...loopVars, ...this.params.keys(), ...Object.keys(BUILTINS)];
    this.sink.error(
      n.from,
      n.to,
      `unknown name '${name}'`,
      suggest(name, candidates) ?? "declare it with param NAME = VALUE above this line",
    );
    return null;
  }

  /** The transitive point dependencies of an expression's names, or null if none. */
  private pointDepsOf(e: Expr, loopVars: string[]): { deps: string[] | null; loop: boolean } {
    const deps = new Set<string>();
    let loop = false;
    for (const x of walk(e)) {
      if (x.k !== "name") continue;
      if (loopVars.includes(x.name)) {
        loop = true;
        continue;
      }
      const p = this.params.get(x.name);
      if (p) {
        deps.add(x.name);
        for (const d of p.deps) deps.add(d);
      } else if (x.name === "ut" || x.name === "temp") {
        deps.add("ut");
        deps.add("temp");
      } else if (x.name === "kappa") {
        deps.add("kappa");
        for (const d of this.kappaDeps) deps.add(d);
      }
    }
    return { deps: deps.size ? [...deps] : null, loop };
  }

  /** The first swept name a value depends on (a swept param, or temp), or null. */
  private sweptDep(t: ValueTpl): string | null {
    if (!t.pointDeps) return null;
    for (const d of t.pointDeps) if (this.swept.has(d)) return d;
    return null;
  }

  /**
   * Compiles a value expression. `expect`: the dimension the context needs
   * ("length": no unit symbol at all; null: anything). Returns null after
   * reporting an error.
   */
  private compileValue(
    node: SyntaxNode,
    loopVars: string[],
    expect: Dim | "length" | null,
    what: string,
  ): ValueTpl | null {
    const e = this.build(node);
    if (isBad(e)) return null;
    const dim = inferDim(e, {
      name: (n) => this.nameDim(n, loopVars),
      probeCall: (c) => {
        this.sink.error(
          c.fnFrom,
          c.fnTo,
          `${c.fn}() can only be used in a probe`,
          "probe NAME = EXPR reads voltages and currents of the solved network",
        );
        return null;
      },
      interp: (i) => this.interpAsValue(i),
      report: (f, t, m, h) => this.sink.error(f, t, m, h),
    });
    if (!dim) return null;
    if (expect === "length") {
      if (hasUnit(dim)) {
        this.sink.error(e.from, e.to, `this is ${describeDim(dim)}, but ${what}`);
        return null;
      }
    } else if (expect && !compatible(expect, dim)) {
      const needs = sameDim(expect, DIMENSIONLESS) ? "a plain number" : describeDim(expect);
      this.sink.error(e.from, e.to, `expected ${needs} here, but this is ${describeDim(dim)}`, what);
      return null;
    }
    const { deps, loop } = this.pointDepsOf(e, loopVars);
    const hasNames = loop || deps !== null || [...walk(e)].some((x) => x.k === "name");
    const fn = this.compiler.compile(e);
    const t: ValueTpl = {
      from: e.from,
      to: e.to,
      fn,
      isConstant: !hasNames,
      constant: NaN,
      loopDependent: loop,
      loopNames: loopVars,
      pointDeps: deps,
      dim,
      cached: false,
      cachedValue: NaN,
    };
    if (t.isConstant) t.constant = evaluateNumber(fn, this.scope);
    return t;
  }

  private valueOf(t: ValueTpl): number {
    if (t.isConstant) return t.constant;
    if (!t.loopDependent) {
      if (!t.cached) {
        t.cachedValue = evaluateNumber(t.fn!, this.scope);
        t.cached = true;
      }
      return t.cachedValue;
    }
    return evaluateNumber(t.fn!, this.scope);
  }

  /** A binding for a value that depends on the point, capturing the current loop values. */
  private bind(t: ValueTpl, target: BindingTarget): void {
    if (!t.pointDeps || !t.fn) return;
    const fn = t.fn;
    if (!t.loopDependent) {
      this.bindings.push({ target, dependsOn: t.pointDeps, evaluate: (s) => evaluateNumber(fn, s) });
      return;
    }
    const names = t.loopNames;
    const values = this.loopValues.slice(0, names.length);
    this.bindings.push({
      target,
      dependsOn: t.pointDeps,
      evaluate: (s) => evaluateNumber(fn, new LayeredScope(s, names, values)),
    });
  }

  /** A name (Definition, Identifier or InterpolatedName node) as a template. */
  private compileName(node: SyntaxNode, loopVars: string[]): NameTpl | null {
    const inner =
      node.type.id === T.Definition
        ? (node.getChild("InterpolatedName") ?? null)
        : node.type.id === T.InterpolatedName
          ? node
          : null;
    if (!inner) return fixedTpl(node.from, node.to, this.src(node));
    const e = this.build(inner);
    if (e.k !== "interp" || isBad(e)) return null;
    return this.nameTplOf(e, loopVars);
  }

  private nameTplOf(e: InterpExpr | NameExpr, loopVars: string[]): NameTpl | null {
    if (e.k === "name") return fixedTpl(e.from, e.to, e.name);
    const parts: NameTpl["parts"] = [];
    let ok = true;
    for (const p of e.parts) {
      if (typeof p === "string") {
        parts.push(p);
        continue;
      }
      const dim = inferDim(p, {
        name: (n) => this.nameDim(n, loopVars),
        probeCall: (c) => {
          this.sink.error(c.fnFrom, c.fnTo, `${c.fn}() cannot be used inside a name`);
          return null;
        },
        interp: (i) => this.interpAsValue(i),
        report: (f, t, m, h) => this.sink.error(f, t, m, h),
      });
      if (!dim) {
        ok = false;
        continue;
      }
      if (hasUnit(dim)) {
        this.sink.error(p.from, p.to, `a name piece is a whole number, but this is ${describeDim(dim)}`);
        ok = false;
        continue;
      }
      const { deps, loop } = this.pointDepsOf(p, loopVars);
      const fn = this.compiler.compile(p);
      const hasNames = loop || deps !== null || [...walk(p)].some((x) => x.k === "name");
      const value: ValueTpl = {
        from: p.from,
        to: p.to,
        fn,
        isConstant: !hasNames,
        constant: hasNames ? NaN : evaluateNumber(fn, this.scope),
        loopDependent: loop,
        loopNames: loopVars,
        pointDeps: deps,
        dim,
        cached: false,
        cachedValue: NaN,
      };
      const sw = this.sweptDep(value);
      if (sw) {
        this.sink.error(
          p.from,
          p.to,
          `this name depends on '${sw}', which is swept`,
          "a sweep may not change the structure of the network: use a param that is not swept",
        );
        ok = false;
        continue;
      }
      const { slot, offset } = loopOffset(p, loopVars);
      parts.push({ value, slot, offset });
    }
    if (!ok) return null;
    const lits = [""];
    const pieces: NamePiece[] = [];
    for (const p of parts) {
      if (typeof p === "string") lits[lits.length - 1] += p;
      else {
        pieces.push(p);
        lits.push("");
      }
    }
    const key = lits.join("\u0001");
    let shape = this.shapes.get(key);
    if (!shape) {
      shape = { lits, node: null, dev: null, id: this.shapeList.length };
      this.shapes.set(key, shape);
      this.shapeList.push(shape);
    }
    return { from: e.from, to: e.to, fixed: null, parts, shape, pieces, fixedNode: -1 };
  }

  /** A pin value that names a node. */
  private compileNodeRef(node: SyntaxNode, key: string, loopVars: string[]): NameTpl | null {
    if (node.type.id === T.Identifier) {
      const name = this.src(node);
      let what: string | null = null;
      if (loopVars.includes(name)) what = "a loop variable";
      else if (this.params.has(name) || this.laterParam(name) !== undefined) what = "a param";
      else if (name in BUILTINS && !this.reservedRails.has(name)) what = "a built-in value";
      if (what) {
        this.sink.error(
          node.from,
          node.to,
          `${key}= names a node, but '${name}' is ${what}`,
          what === "a loop variable"
            ? `write a node name such as x{${name}}`
            : `to hold a node at a fixed voltage, declare it: rail ${name}_node = ${name}`,
        );
        return null;
      }
      return fixedTpl(node.from, node.to, name);
    }
    if (node.type.id === T.InterpolatedName) return this.compileName(node, loopVars);
    this.sink.error(
      node.from,
      node.to,
      `${key}= names a node, not a value`,
      "to hold a node at a fixed voltage, declare a rail: rail vg = 0.5 and write gate=vg",
    );
    return null;
  }

  // ---------------------------------------------------------------- execute

  private exec(tpls: Tpl[]): void {
    for (const t of tpls) {
      if (++this.work > this.limits.maxWork)
        this.overflow(t, `more than ${this.limits.maxWork.toLocaleString("en-US")} statements to run (the limit)`);
      switch (t.k) {
        case "device":
          this.execDevice(t);
          break;
        case "inject":
          this.execInject(t);
          break;
        case "rail":
          this.execRail(t);
          break;
        case "probe":
          this.execProbe(t);
          break;
        case "for":
          this.execFor(t);
          break;
      }
    }
  }

  private overflow(t: { at: number } | { from: number; to: number }, what: string): never {
    const span = this.outerFor ?? ("at" in t ? { from: t.at, to: t.at } : t);
    const to = this.outerFor ? Math.min(span.to, this.lines.lineEnd(span.from)) : this.lines.lineEnd(span.from);
    this.sink.error(
      span.from,
      to,
      `${this.outerFor ? "this loop makes" : "this makes"} ${what}`,
      "reduce the loop ranges or split the network",
    );
    throw new Aborted();
  }

  /** Silences follow-up diagnostics about the names a skipped body mentions. */
  private suppressTpl(ts: Tpl[]): void {
    for (const t of ts) {
      if (t.k === "device") this.suppressRefs(t.nodes);
      else if (t.k === "inject") this.suppressRefs([t.from, t.to]);
      else if (t.k === "rail") this.suppressRefs([t.name]);
      else if (t.k === "for") this.suppressTpl(t.body);
    }
  }

  /**
   * Sizes the device columns for the devices a top-level loop makes when its
   * bounds are known before it runs. Nothing is reserved for a loop that
   * would pass the device limit (it stops with an error).
   */
  private reserveDevices(t: ForTpl): void {
    const n = this.devNames.length + this.devicesOf([t]);
    if (n <= this.gate.data.length || n > this.limits.maxDevices) return;
    for (const c of [this.gate, this.source, this.drain, this.bulk, this.devAt]) c.reserve(n);
    this.devNames.reserve(n);
    this.devType.reserve(n);
    this.w.reserve(n);
    this.l.reserve(n);
  }

  /** Devices the templates make, counting loops whose bounds do not depend on an enclosing loop. */
  private devicesOf(ts: Tpl[]): number {
    let n = 0;
    for (const t of ts) {
      if (t.k === "device") n++;
      else if (t.k === "for" && t.first && t.last && !t.first.loopDependent && !t.last.loopDependent) {
        const count = this.valueOf(t.last) - this.valueOf(t.first) + 1;
        if (Number.isSafeInteger(count) && count > 0) n += count * this.devicesOf(t.body);
      }
      if (n > this.limits.maxDevices) return this.limits.maxDevices;
    }
    return n;
  }

  /**
   * Statement runs of executing `ts` once, as `exec` and `execFor` count them: one per
   * statement, and per loop iteration one plus its body's. A loop whose bounds depend on
   * an enclosing loop counts as one run (then `exact` is false: the total is a lower bound).
   */
  private runsOf(ts: Tpl[]): { runs: number; exact: boolean } {
    let runs = 0;
    let exact = true;
    for (const t of ts) {
      runs++;
      if (t.k !== "for") continue;
      if (!t.first || !t.last || t.first.loopDependent || t.last.loopDependent) {
        exact = false;
        continue;
      }
      const count = this.valueOf(t.last) - this.valueOf(t.first) + 1;
      if (!(Number.isSafeInteger(count) && count > 0)) continue;
      const body = this.runsOf(t.body);
      runs += count * (1 + body.runs);
      exact &&= body.exact;
    }
    return { runs, exact };
  }

  private execFor(t: ForTpl): void {
    const a = this.valueOf(t.first!);
    const b = this.valueOf(t.last!);
    for (const [v, s] of [
      [a, t.first!],
      [b, t.last!],
    ] as const) {
      if (!Number.isSafeInteger(v)) {
        this.sink.error(
          s.from,
          s.to,
          `a loop bound must be a whole number, but this is ${fmt(v)}`,
          "use round(), floor() or ceil()",
        );
        return this.suppressTpl(t.body);
      }
    }
    if (b < a) {
      this.sink.error(
        t.rangeFrom,
        t.rangeTo,
        `reversed range ${a}..${b}: a range runs upward and includes both ends`,
        `write ${b}..${a}`,
      );
      return this.suppressTpl(t.body);
    }
    const count = b - a + 1;
    const body = this.runsOf(t.body);
    const runs = count * (1 + body.runs);
    if (this.work + runs > this.limits.maxWork) {
      const limit = this.limits.maxWork.toLocaleString("en-US");
      // The outermost loop reports its own total; an inner loop only gets here when an
      // enclosing loop's estimate was low (bounds that depend on a loop variable).
      const outermost = this.outerFor !== null && this.outerFor.from === t.from;
      this.overflow(
        t,
        outermost && Number.isSafeInteger(runs)
          ? `${body.exact ? "" : "at least "}${runs.toLocaleString("en-US")} statement runs, more than the limit of ${limit}`
          : `more than ${limit} statement runs (the limit)`,
      );
    }
    const lv = this.loopValues;
    const outerVar = this.loopVar;
    this.loopVar = t.variable;
    for (let v = a; v <= b; v++) {
      lv[t.slot] = v;
      this.scope.set(t.variable, v);
      this.work++;
      this.exec(t.body);
    }
    this.loopVar = outerVar;
    this.scope.delete(t.variable);
  }

  private nameOf(t: NameTpl): string | null {
    if (t.fixed !== null) return t.fixed;
    let s = "";
    for (const p of t.parts) {
      if (typeof p === "string") {
        s += p;
        continue;
      }
      const v = p.slot >= 0 ? this.loopValues[p.slot] + p.offset : this.valueOf(p.value);
      if (!Number.isSafeInteger(v) || v < 0) {
        this.sink.error(
          p.value.from,
          p.value.to,
          `a name piece must be a whole number of at least 0, but this one is ${fmt(v)}`,
          "check the loop range: x{k-1} at k = 0 gives -1",
        );
        return null;
      }
      s += v;
    }
    return s;
  }

  /**
   * Whether the pieces of template t (one or two) are whole numbers in
   * [0, PIECE_BOUND); the values go to pieceA / pieceB. When not, nameOf
   * makes the name or reports the bad piece.
   */
  private pieceValues(t: NameTpl): boolean {
    const ps = t.pieces;
    const p0 = ps[0];
    const a = p0.slot >= 0 ? this.loopValues[p0.slot] + p0.offset : this.valueOf(p0.value);
    if (!(a >= 0 && a < PIECE_BOUND && Number.isInteger(a))) return false;
    if (ps.length === 1) {
      this.pieceA = a;
      this.pieceB = 0;
      return true;
    }
    const p1 = ps[1];
    const b = p1.slot >= 0 ? this.loopValues[p1.slot] + p1.offset : this.valueOf(p1.value);
    if (!(b >= 0 && b < PIECE_BOUND && Number.isInteger(b))) return false;
    this.pieceA = a;
    this.pieceB = b;
    return true;
  }

  private nodeOf(t: NameTpl): number {
    if (t.fixed !== null) {
      if (t.fixedNode < 0) t.fixedNode = this.nodeByName(t, t.fixed);
      return t.fixedNode;
    }
    const shape = t.shape;
    if (shape !== null && t.pieces.length <= 2) {
      const cache = (shape.node ??= new PieceIndex(t.pieces.length, this.pieceBudget));
      const p0 = t.pieces[0];
      const a = p0.slot >= 0 ? this.loopValues[p0.slot] + p0.offset : this.valueOf(p0.value);
      if (a >= 0 && a < PIECE_BOUND && Number.isInteger(a)) {
        let b = 0;
        let ok = true;
        if (t.pieces.length === 2) {
          const p1 = t.pieces[1];
          b = p1.slot >= 0 ? this.loopValues[p1.slot] + p1.offset : this.valueOf(p1.value);
          ok = b >= 0 && b < PIECE_BOUND && Number.isInteger(b);
        }
        if (ok) {
          const hit = cache.get(a, b);
          if (hit >= 0) return hit;
          if (!cache.registered) this.registerNodeShape(shape);
          if (cache.complete && cache.set(a, b, this.nodeNames.length)) {
            // No other node can carry this name: make it without a Map look-up (or its string).
            const i = this.newNode(t, null, shape, a, b);
            this.nodeShape.data[i] = shape.id;
            return i;
          }
          cache.complete = false;
          const before = this.nodeNames.length;
          const i = this.nodeByName(t, shapeName(shape.lits, a, b));
          if (cache.set(a, b, i) && i === before) this.nodeShape.data[i] = shape.id;
          return i;
        }
      }
    }
    return this.nodeByName(t, this.nameOf(t));
  }

  /** The node named `name`, looked up or made (made: in the name Map at once, see `nodes`). */
  private nodeByName(t: NameTpl, name: string | null): number {
    if (name === null) return -1;
    let i = this.findNode(name);
    if (i === undefined) {
      i = this.newNode(t, name, null, 0, 0);
      this.nodes.full();
      this.madeWithoutIndex(t, name);
    }
    return i;
  }

  /** A new node named `name`, or (name null) the name of `shape` for piece values a, b. */
  private newNode(t: NameTpl, name: string | null, shape: Shape | null, a: number, b: number): number {
    const i = this.nodeNames.length;
    if (name !== null) this.nodeNames.pushName(name);
    else this.nodeNames.pushPieces(shape!.id, a, b);
    this.railValue.push(NaN);
    this.isRail.push(0);
    this.nodeFrom.push(t.from);
    this.nodeTo.push(t.to);
    this.nodeShape.push(-1);
    if (this.brokenNames.size > 0 && this.brokenNames.has(name ?? this.nodeNames.at(i)!)) this.suppressed.add(i);
    return i;
  }

  /** The node named `name`, if any. Reads the PieceIndex of complete shapes instead of filling the name Map when it can. */
  private findNode(name: string): number | undefined {
    if (!this.nodes.pending()) return this.nodes.full().get(name);
    const lit = [name];
    for (const o of this.nodeShapes) {
      if (!mayShareName(lit, o.lits)) continue;
      const r = o.node && o.node.complete ? readPieces(name, o.lits, this.pieceOut) : -1;
      if (r < 0) return this.nodes.full().get(name);
      if (r === 1) {
        const hit = o.node!.get(this.pieceOut[0], this.pieceOut[1]);
        if (hit >= 0) return hit;
      }
    }
    return this.nodes.partial().get(name);
  }

  /** First use of a node name shape: complete unless another node shape or fixed node name made so far may share a name with it. */
  private registerNodeShape(shape: Shape): void {
    this.nodeShapeSet.add(shape);
    const own = shape.node;
    if (own) own.registered = true;
    if (this.nodeShapes.length >= SHAPES_TRACKED) {
      // Too many to compare: every node name is looked up as a string from now on.
      if (own) own.complete = false;
      if (!this.nodeShapesOff) {
        for (const o of this.nodeShapes) if (o.node) o.node.complete = false;
        this.nodes.full();
      }
      this.nodeShapesOff = true;
      return;
    }
    let overlap = this.fixedNodeOverflow;
    for (const f of this.fixedNodeNames) if (mayShareName(shape.lits, [f])) overlap = true;
    for (const o of this.nodeShapes) {
      if (mayShareName(shape.lits, o.lits)) {
        overlap = true;
        if (o.node) o.node.complete = false;
      }
    }
    if (own && overlap) own.complete = false;
    this.nodeShapes.push(shape);
  }

  /** Notes a node made without its shape's PieceIndex: shapes that may give its name are no longer complete. */
  private madeWithoutIndex(t: NameTpl, name: string): void {
    const shape = t.shape;
    if (this.nodeShapesOff) {
      if (shape?.node) shape.node.complete = false;
      return;
    }
    if (shape !== null) {
      if (!this.nodeShapeSet.has(shape)) this.registerNodeShape(shape);
      if (shape.node) shape.node.complete = false;
      for (const o of this.nodeShapes)
        if (o !== shape && o.node && mayShareName([name], o.lits)) o.node.complete = false;
      return;
    }
    for (const o of this.nodeShapes) if (o.node && mayShareName([name], o.lits)) o.node.complete = false;
    if (this.fixedNodeNames.length < FIXED_SEEN) this.fixedNodeNames.push(name);
    else this.fixedNodeOverflow = true;
  }

  /** Whether a rail, inject, probe or param name may be a name of this shape. */
  private kindMayShare(lits: string[]): boolean {
    for (const k of this.kindByName.keys()) if (mayShareName(lits, [k])) return true;
    return false;
  }

  /** What else carries `name` (rail, device, inject, probe, param), for one-namespace checks. */
  private otherKind(name: string, self: "a rail" | "a device" | "an inject" | "a probe"): string | null {
    const k = this.kindByName.get(name);
    if (k !== undefined && k !== self) return k;
    if (self !== "a device" && this.devHas(name, null)) return "a device";
    return null;
  }

  private duplicate(kind: string, name: string, t: NameTpl, firstAt: number): void {
    const hint =
      t.fixed !== null && this.outerFor !== null
        ? `inside a for block a name needs a {…} piece, e.g. ${name}{${this.loopVar}}`
        : "every name means one thing";
    this.sink.error(t.from, t.to, `${kind} '${name}' is defined twice (first on line ${this.line(firstAt)})`, hint);
  }

  /** `name` now means `kind` ("a rail", ...), declared at offset `at`: one namespace for rails, injects, probes and params. */
  private declare(name: string, kind: string, at: number): void {
    this.kindByName.set(name, kind);
    this.declAt.set(name, at);
  }

  private clash(kind: string, name: string, t: { from: number; to: number }, other: string): void {
    const at = other === "a device" ? this.devDeclAt(name) : this.declAt.get(name);
    const where = at !== undefined ? ` (first on line ${this.line(at)})` : "";
    this.sink.error(
      t.from,
      t.to,
      `${kind} name '${name}' is already ${other}${where}`,
      "every name means one thing: rename one of them",
    );
  }

  private suppressRefs(refs: (NameTpl | null)[]): void {
    for (const r of refs) {
      if (!r) continue;
      const name = r.fixed ?? null;
      if (name === null) continue;
      this.brokenNames.add(name);
      const i = this.findNode(name);
      if (i !== undefined) this.suppressed.add(i);
    }
  }

  private length(t: ValueTpl | null, key: "w" | "l", fallback: number): number {
    if (!t) return fallback;
    const v = this.valueOf(t);
    if (!(v > 0 && Number.isFinite(v))) {
      this.sink.error(t.from, t.to, `${key} must be a positive length in metres, but it is ${fmt(v)}`);
      return NaN;
    }
    if (v > 1e-3 || v < 1e-9) {
      this.sink.warning(
        t.from,
        t.to,
        `${key} is ${fmt(v)} m, outside 1 nm to 1 mm: lengths are in metres`,
        `write ${key}=2u for 2 µm`,
      );
    }
    return v;
  }

  /** A statement that cannot make its element: its own name and its nodes stop follow-up diagnostics. */
  private skipElement(name: NameTpl, refs: (NameTpl | null)[]): void {
    const n = this.nameOf(name);
    if (n !== null) this.brokenNames.add(n);
    this.suppressRefs(refs);
  }

  /** Compares a device name shape with every other one made so far (sets `complete` false on both when they may share a name). */
  private registerDevShape(shape: Shape): void {
    const own = shape.dev!;
    own.registered = true;
    if (this.devShapes.length >= SHAPES_TRACKED) {
      // Too many to compare: every device name is looked up as a string from now on.
      own.complete = false;
      if (!this.devShapesOff) for (const o of this.devShapes) if (o.dev) o.dev.complete = false;
      this.devShapesOff = true;
      return;
    }
    if (this.fixedDevOverflow) own.complete = false;
    for (const f of this.fixedDevNames) if (mayShareName(shape.lits, [f])) own.complete = false;
    for (const o of this.devShapes) {
      if (mayShareName(shape.lits, o.lits)) {
        own.complete = false;
        if (o.dev) o.dev.complete = false;
      }
    }
    this.devShapes.push(shape);
  }

  /** Notes a device made without its PieceIndex: no device shape that may give the same name can trust a miss any more. */
  private devWithoutIndex(t: NameTpl, name: string): void {
    const shape = t.shape;
    if (this.devShapesOff) {
      if (shape?.dev) shape.dev.complete = false;
      return;
    }
    if (shape !== null) {
      if (shape.dev) shape.dev.complete = false;
      else if (!this.devShapes.includes(shape)) {
        for (const o of this.devShapes) if (o.dev && mayShareName(shape.lits, o.lits)) o.dev.complete = false;
        this.devShapes.push(shape);
      }
      return;
    }
    for (const o of this.devShapes) if (o.dev && mayShareName(o.lits, [name])) o.dev.complete = false;
    if (this.fixedDevNames.length < FIXED_SEEN) this.fixedDevNames.push(name);
    else this.fixedDevOverflow = true;
  }

  private execDevice(t: DeviceTpl): void {
    if (t.broken) return this.skipElement(t.name, t.nodes);
    const shape = t.name.shape;
    let index: PieceIndex | null = null;
    // Made only when needed while index is set: a shape name from pieceA, pieceB.
    let name: string | null = null;
    if (shape !== null && t.name.pieces.length <= 2) {
      index = shape.dev ??= new PieceIndex(t.name.pieces.length, this.pieceBudget);
      if (!index.registered) this.registerDevShape(shape);
      if (!this.pieceValues(t.name)) index = null;
    }
    const a = this.pieceA;
    const bb = this.pieceB;
    if (index === null) {
      name = this.nameOf(t.name);
      if (name === null) return this.suppressRefs(t.nodes);
    }
    const g = this.nodeOf(t.nodes[0]!);
    const s = this.nodeOf(t.nodes[1]!);
    const d = this.nodeOf(t.nodes[2]!);
    const b = t.nodes[3] ? this.nodeOf(t.nodes[3]) : SUBSTRATE;
    if (g < 0 || s < 0 || d < 0 || (t.nodes[3] && b < 0)) return;
    const w = this.length(t.w, "w", DEFAULT_W);
    const l = this.length(t.l, "l", DEFAULT_L);
    const i = this.devNames.length;
    let first: number | undefined;
    if (index !== null) {
      const hit = index.get(a, bb);
      first =
        hit >= 0 ? hit : index.complete ? undefined : this.devs.full().get((name = shapeName(shape!.lits, a, bb)));
    } else first = this.devs.full().get(name!);
    if (first !== undefined) {
      this.suppressRefs(t.nodes);
      return this.duplicate("device", name ?? shapeName(shape!.lits, a, bb), t.name, this.devAt.data[first]);
    }
    let other: string | null = null;
    const kinds = this.kindByName.size;
    if (index !== null && kinds <= KIND_SCAN) {
      // Names only join kindByName, so a shape checked at this size still cannot match.
      if (index.kindSize !== kinds) {
        index.kindClash = this.kindMayShare(t.name.shape!.lits);
        index.kindSize = kinds;
      }
      if (index.kindClash) other = this.otherKind((name ??= shapeName(shape!.lits, a, bb)), "a device");
    } else if (kinds) other = this.otherKind((name ??= shapeName(shape!.lits, a, bb)), "a device");
    if (other) {
      this.suppressRefs(t.nodes);
      return this.clash("device", name!, t.name, other);
    }
    if (i >= this.limits.maxDevices) {
      this.overflow(t, `more than ${this.limits.maxDevices.toLocaleString("en-US")} devices (the limit)`);
    }
    if (index === null || !index.set(a, bb, i)) this.devWithoutIndex(t.name, (name ??= shapeName(shape!.lits, a, bb)));
    if (name === null) this.devNames.pushPieces(shape!.id, a, bb);
    else this.devNames.pushName(name);
    this.devType.push(t.type);
    this.gate.push(g);
    this.source.push(s);
    this.drain.push(d);
    this.bulk.push(b);
    this.w.push(w);
    this.l.push(l);
    this.devAt.push(t.at);
    if (t.w) this.bind(t.w, { kind: "w", index: i });
    if (t.l) this.bind(t.l, { kind: "l", index: i });
  }

  private execInject(t: InjectTpl): void {
    if (t.broken) return this.skipElement(t.name, [t.from, t.to]);
    const name = this.nameOf(t.name);
    if (name === null) return this.suppressRefs([t.from, t.to]);
    const f = this.nodeOf(t.from!);
    const to = this.nodeOf(t.to!);
    if (f < 0 || to < 0) return;
    const v = this.valueOf(t.value!);
    if (!Number.isFinite(v)) {
      this.sink.error(t.value!.from, t.value!.to, `an inject value must be a finite current, but it is ${fmt(v)}`);
      return;
    }
    const first = this.injIndex.get(name);
    if (first !== undefined) {
      this.suppressRefs([t.from, t.to]);
      return this.duplicate("inject", name, t.name, this.injAt.data[first]);
    }
    const other = this.otherKind(name, "an inject");
    if (other) {
      this.suppressRefs([t.from, t.to]);
      return this.clash("inject", name, t.name, other);
    }
    if (f === to)
      this.sink.warning(
        t.to!.from,
        t.to!.to,
        `inject '${name}' goes from node '${this.nodeNames.at(f)}' to itself`,
        "its current has no effect",
      );
    if (this.injNames.length >= this.limits.maxElements)
      this.overflow(t, `more than ${this.limits.maxElements.toLocaleString("en-US")} injects (the limit)`);
    const i = this.injNames.length;
    this.injNames.push(name);
    this.injIndex.set(name, i);
    this.declare(name, "an inject", t.name.from);
    this.injFrom.push(f);
    this.injTo.push(to);
    this.injValue.push(v);
    this.injAt.push(t.at);
    this.bind(t.value!, { kind: "inject", index: i });
  }

  private execRail(t: RailTpl): void {
    const name = this.nameOf(t.name);
    if (name === null) return;
    if (!t.value) this.brokenNames.add(name);
    let v = t.value ? this.valueOf(t.value) : NaN;
    if (t.value && !Number.isFinite(v)) {
      this.sink.error(t.value.from, t.value.to, `a rail value must be a finite voltage, but it is ${fmt(v)}`);
    }
    const existing = this.findNode(name);
    if (existing !== undefined && this.isRail.data[existing]) {
      const first = this.rails.find((r) => r.node === existing);
      return this.duplicate("rail", name, t.name, first ? first.span.from : t.at);
    }
    const other = this.otherKind(name, "a rail");
    if (other) return this.clash("rail", name, t.name, other);
    if (this.rails.length >= this.limits.maxElements)
      this.overflow(t, `more than ${this.limits.maxElements.toLocaleString("en-US")} rails (the limit)`);
    const i = this.nodeOf(t.name);
    if (i < 0) return;
    if (!Number.isFinite(v)) {
      this.suppressed.add(i);
      v = 0;
    }
    this.isRail.data[i] = 1;
    this.railValue.data[i] = v;
    this.rails.push({ name, node: i, span: { from: t.name.from, to: t.name.to } });
    this.declare(name, "a rail", t.name.from);
    if (t.value) this.bind(t.value, { kind: "rail", node: i });
  }

  private execProbe(t: ProbeTpl): void {
    const name = this.nameOf(t.name);
    if (name === null) return;
    const first = this.probeNames.get(name);
    if (first !== undefined) return this.duplicate("probe", name, t.name, first);
    const other = this.otherKind(name, "a probe");
    if (other) return this.clash("probe", name, t.name, other);
    if (this.pendingProbes.length >= this.limits.maxElements)
      this.overflow(t, `more than ${this.limits.maxElements.toLocaleString("en-US")} probes (the limit)`);
    const args: PendingProbe["args"] = [];
    for (const a of t.args) {
      const n = this.nameOf(a.name);
      if (n === null) return;
      args.push({ kind: a.kind, name: n, from: a.name.from, to: a.name.to });
    }
    this.probeNames.set(name, t.at);
    this.declare(name, "a probe", t.name.from);
    this.pendingProbes.push({
      name,
      span: { from: t.name.from, to: t.name.to },
      fn: t.fn!,
      loopNames: t.loopNames,
      loopValues: this.loopValues.slice(0, t.loopNames.length),
      args,
    });
  }

  // ---------------------------------------------------------------- finish

  private finish(): void {
    this.resolveProbes();
    this.checkSweeps();
    if (this.settings.model === "ekv") {
      const at = this.settingAt.get("model")!;
      const missing = [this.settings.vt0 === null ? "vt0" : null, this.settings.ispec === null ? "ispec" : null].filter(
        Boolean,
      );
      if (missing.length)
        this.sink.error(
          at.from,
          this.lines.lineEnd(at.from),
          `set model = ekv needs ${missing.join(" and ")}`,
          "for example set vt0 = 450m and set ispec = 100n",
        );
    }
    // One namespace: an internal node may not share its name with anything else.
    // A node made through a shape no device name can match needs no device look-up;
    // injects and probes are looked up from the smaller side.
    const nodeCount = this.nodeNames.length;
    const devCheck = new Int8Array(this.shapeList.length).fill(-1); // -1 not yet known, 0 no, 1 yes
    const shapeOf = this.nodeShape.data;
    const injMark = this.injNames.length < nodeCount ? this.markNodes(this.injNames) : null;
    const probeMark = this.probeNames.size < nodeCount ? this.markNodes(this.probeNames.keys()) : null;
    for (let i = 0; i < nodeCount; i++) {
      if (this.isRail.data[i]) continue;
      const sh = shapeOf[i];
      if (sh >= 0 && devCheck[sh] < 0) devCheck[sh] = this.mayBeDeviceName(this.shapeList[sh].lits) ? 1 : 0;
      // The string only when some check below reads it.
      const name = sh < 0 || devCheck[sh] === 1 || !injMark || !probeMark ? this.nodeNames.at(i)! : "";
      const other = (sh < 0 ? this.devHas(name, null) : devCheck[sh] === 1 && this.devs.full().has(name))
        ? "a device"
        : (injMark ? injMark[i] === 1 : this.injIndex.has(name))
          ? "an inject"
          : (probeMark ? probeMark[i] === 1 : this.probeNames.has(name))
            ? "a probe"
            : null;
      if (other)
        this.sink.error(
          this.nodeFrom.data[i],
          this.nodeTo.data[i],
          `node name '${name || this.nodeNames.at(i)}' is already ${other}`,
          "every name means one thing: rename one of them",
        );
    }
    this.connectivity();
  }

  /** 1 for every node that carries one of the names. */
  private markNodes(names: Iterable<string>): Uint8Array {
    const mark = new Uint8Array(this.nodeNames.length);
    for (const n of names) {
      const i = this.findNode(n);
      if (i !== undefined) mark[i] = 1;
    }
    return mark;
  }

  /** Whether a device carries `name` (of shape `lits` when known). */
  private devHas(name: string, lits: string[] | null): boolean {
    return this.mayBeDeviceName(lits ?? [name]) && this.devs.full().has(name);
  }

  /** Whether some device made so far may carry a name of this shape. */
  private mayBeDeviceName(lits: string[]): boolean {
    if (this.fixedDevOverflow || this.devShapesOff) return true;
    for (const f of this.fixedDevNames) if (mayShareName(lits, [f])) return true;
    for (const o of this.devShapes) if (mayShareName(lits, o.lits)) return true;
    return false;
  }

  private checkSweeps(): void {
    const seen = new Map<string, number>();
    let points = 1;
    for (const s of this.pendingSweeps) {
      if (seen.has(s.param)) {
        this.sink.error(
          s.nameFrom,
          s.nameTo,
          `'${s.param}' is swept twice (first on line ${this.line(seen.get(s.param)!)})`,
        );
        continue;
      }
      seen.set(s.param, s.span.from);
      if (s.param !== "temp") {
        const p = this.params.get(s.param);
        if (!p) {
          if (this.brokenNames.has(s.param)) continue;
          const hint =
            s.param === "kappa" || s.param === "ut"
              ? `only params and temp can be swept: write param k = 0.7, set kappa = k, and sweep k`
              : (suggest(s.param, this.params.keys()) ?? "declare it with param NAME = VALUE");
          const what =
            s.param === "kappa" || s.param === "ut"
              ? `'${s.param}' cannot be swept directly`
              : `sweep of unknown param '${s.param}'`;
          this.sink.error(s.nameFrom, s.nameTo, what, hint);
          continue;
        }
        if (!compatible(p.dim, s.dim)) {
          this.sink.error(
            s.dimFrom,
            s.dimTo,
            `the sweep values are ${describeDim(s.dim)}, but '${s.param}' is ${describeDim(p.dim)}`,
          );
          continue;
        }
      } else if (!compatible(KELVIN, s.dim)) {
        this.sink.error(s.dimFrom, s.dimTo, `a temperature sweep takes kelvin, but this is ${describeDim(s.dim)}`);
        continue;
      }
      points *= s.values.length;
    }
    const runs = this.mismatch?.runs ?? 1;
    if (this.pendingSweeps.length && points * runs > this.limits.maxPoints) {
      const s = this.pendingSweeps[0];
      this.sink.error(
        s.span.from,
        this.lines.lineEnd(s.span.from),
        `the sweeps make ${(points * runs).toLocaleString("en-US")} solves${runs > 1 ? " with the mismatch runs" : ""}, more than the limit of ${this.limits.maxPoints.toLocaleString("en-US")}`,
        "use fewer sweep points or mismatch runs",
      );
    }
  }

  private connectivity(): void {
    if (this.syntaxErrors > 0 && this.nodeNames.length === 0) return;
    const r = checkConnectivity({
      nodeCount: this.nodeNames.length,
      isRail: this.isRail.data,
      deviceCount: this.devNames.length,
      gate: this.gate.data,
      source: this.source.data,
      drain: this.drain.data,
      bulk: this.bulk.data,
      injectCount: this.injNames.length,
      injectFrom: this.injFrom.data,
      injectTo: this.injTo.data,
    });
    const at = (i: number) => [this.nodeFrom.data[i], this.nodeTo.data[i]] as const;
    for (const i of r.floating) {
      if (this.suppressed.has(i)) continue;
      const [f, t] = at(i);
      this.sink.error(
        f,
        t,
        `node '${this.nodeNames.at(i)}' has no DC path to any rail`,
        "connect it through a device channel (source or drain) to a rail; gates and injects carry no DC current",
      );
    }
    for (const i of r.single) {
      if (this.suppressed.has(i)) continue;
      const [f, t] = at(i);
      this.sink.warning(
        f,
        t,
        `node '${this.nodeNames.at(i)}' is touched by only one terminal`,
        "a node joins at least two terminals: check the spelling of its name",
      );
    }
    for (const i of r.unusedRails) {
      if (this.suppressed.has(i)) continue;
      const rail = this.rails.find((x) => x.node === i);
      if (rail) this.sink.warning(rail.span.from, rail.span.to, `rail '${rail.name}' is not connected to anything`);
    }
  }

  private result(): ElaborationResult {
    let net: Network | null = null;
    if (this.sink.errors === 0 && !this.aborted) {
      net = this.network();
      this.checkSweepPoints(net);
    }
    const diagnostics = this.sink.finish();
    const ok = this.sink.errors === 0 && !this.aborted;
    return { network: ok ? net : null, diagnostics, ok, name: this.name };
  }

  /**
   * Every sweep value, one sweep at a time with the others at their defaults,
   * must give valid params, rails, injects, lengths and settings. Bounded:
   * a sweep whose bindings times values exceed the budget is not checked here.
   */
  private checkSweepPoints(net: Network): void {
    const budget = 200_000;
    for (const s of net.sweeps) {
      const deps = s.param === "temp" ? ["temp", "ut"] : [s.param];
      const affected = net.bindings.filter((b) => b.dependsOn.some((d) => deps.includes(d)));
      if ((affected.length + net.params.length) * s.values.length > budget) continue;
      const at = (v: number, what: string) =>
        this.sink.error(
          s.span.from,
          this.lines.lineEnd(s.span.from),
          `at ${s.param} = ${fmt(v)}, ${what}`,
          "narrow the sweep range",
        );
      check: for (const v of s.values) {
        const scope = pointScope(net, { [s.param]: v });
        for (const p of net.params) {
          if (!Number.isFinite(scope[p.name])) {
            at(v, `param '${p.name}' is ${fmt(scope[p.name])}`);
            break check;
          }
        }
        if (!(scope.kappa > 0 && scope.kappa <= 1)) {
          at(v, `kappa is ${fmt(scope.kappa)}, outside 0 to 1`);
          break;
        }
        for (const b of affected) {
          const t = b.target;
          const x = b.evaluate(scope);
          let bad: string | null = null;
          if (t.kind === "w" || t.kind === "l") {
            if (!(x > 0 && Number.isFinite(x)))
              bad = `${t.kind} of device '${net.devices.names[t.index]}' is ${fmt(x)}; a length must be positive`;
          } else if (t.kind === "rail") {
            if (!Number.isFinite(x)) bad = `rail '${net.nodes.names[t.node]}' is ${fmt(x)}`;
          } else if (t.kind === "inject") {
            if (!Number.isFinite(x)) bad = `inject '${net.injects.names[t.index]}' is ${fmt(x)}`;
          } else if (t.name === "i0" || t.name === "ispec") {
            if (!(x > 0 && Number.isFinite(x))) bad = `${t.name} is ${fmt(x)}; it must be a positive current`;
          } else if (t.name === "vt0" && !Number.isFinite(x)) bad = `vt0 is ${fmt(x)}`;
          if (bad) {
            at(v, bad);
            break check;
          }
        }
      }
    }
  }

  private network(): Network {
    const count = this.devNames.length;
    const devs = this.devs;
    const devNames = this.devNames;
    const nodes = this.nodes;
    const net: Network = {
      name: this.name,
      settings: { ...this.settings },
      params: this.paramList,
      nodes: {
        // Made here, not on demand: every solver reads nodes.names.
        names: this.nodeNames.all(),
        get index() {
          return nodes.full();
        },
        railValue: this.railValue.finish(),
      },
      rails: this.rails,
      devices: {
        count,
        get names() {
          return devNames.all();
        },
        get index() {
          return devs.full();
        },
        type: this.devType.finish(),
        gate: this.gate.finish(),
        source: this.source.finish(),
        drain: this.drain.finish(),
        bulk: this.bulk.finish(),
        w: this.w.finish(),
        l: this.l.finish(),
        at: this.devAt.finish(),
      },
      injects: {
        count: this.injNames.length,
        names: this.injNames,
        index: this.injIndex,
        from: this.injFrom.finish(),
        to: this.injTo.finish(),
        value: this.injValue.finish(),
        at: this.injAt.finish(),
      },
      probes: [],
      sweeps: this.pendingSweeps.map((s): Sweep => ({ param: s.param, values: s.values, log: s.log, span: s.span })),
      mismatch: this.mismatch,
      bindings: this.bindings,
    };
    net.probes = this.pendingProbes.map((p) => this.probe(p, net));
    return net;
  }

  /** Resolves a probe's arguments (names were checked in `resolveProbes`). */
  private probe(p: PendingProbe, net: Network): Probe {
    const kinds = new Int8Array(p.args.length); // 0 voltage, 1 device, 2 inject, 3 rail
    const index = new Int32Array(p.args.length);
    p.args.forEach((a, i) => {
      if (a.kind === "voltage") {
        kinds[i] = 0;
        index[i] = net.nodes.index.get(a.name)!;
      } else if (net.devices.index.has(a.name)) {
        kinds[i] = 1;
        index[i] = net.devices.index.get(a.name)!;
      } else if (net.injects.index.has(a.name)) {
        kinds[i] = 2;
        index[i] = net.injects.index.get(a.name)!;
      } else {
        kinds[i] = 3;
        index[i] = net.nodes.index.get(a.name)!;
      }
    });
    const names = [...p.loopNames, ...p.args.map((_, i) => `__runnel_arg${i}`)];
    const { fn, loopValues } = p;
    let lastParams: object | null = null;
    let lastSettings: object | null = null;
    let lastScope: Record<string, number> = {};
    return {
      name: p.name,
      span: p.span,
      evaluate(ctx: ProbeContext, params: Readonly<Record<string, number>>, settings: Settings): number {
        if (params !== lastParams || settings !== lastSettings) {
          lastScope = pointScope(net, { ...params, temp: settings.temp });
          lastScope.kappa = settings.kappa;
          lastScope.ut = settings.ut;
          lastParams = params;
          lastSettings = settings;
        }
        const values = loopValues.slice();
        for (let i = 0; i < kinds.length; i++) {
          const j = index[i];
          values.push(
            kinds[i] === 0
              ? ctx.voltage(j)
              : kinds[i] === 1
                ? ctx.deviceCurrent(j)
                : kinds[i] === 2
                  ? ctx.injectCurrent(j)
                  : ctx.railCurrent(j),
          );
        }
        return evaluateNumber(fn, new LayeredScope(lastScope, names, values));
      },
    };
  }

  /** Checks every probe argument against the finished tables. */
  private resolveProbes(): void {
    for (const p of this.pendingProbes) {
      for (const a of p.args) {
        if (this.brokenNames.has(a.name)) continue;
        if (a.kind === "voltage") {
          if (this.findNode(a.name) !== undefined) continue;
          const isDev = this.devHas(a.name, null);
          const hint =
            isDev || this.injIndex.has(a.name)
              ? `'${a.name}' is a ${isDev ? "device" : "inject"}: use current(${a.name})`
              : suggest(a.name, this.nodeNames.length < 5000 ? this.nodeNames.all() : []);
          this.sink.error(a.from, a.to, `voltage() of unknown node '${a.name}'`, hint);
        } else {
          if (this.devHas(a.name, null) || this.injIndex.has(a.name)) continue;
          const node = this.findNode(a.name);
          if (node !== undefined && this.isRail.data[node]) continue;
          if (node !== undefined) {
            this.sink.error(
              a.from,
              a.to,
              `current() needs a device, an inject or a rail, but '${a.name}' is an internal node`,
              `to read its voltage use voltage(${a.name})`,
            );
            continue;
          }
          const cands =
            this.devNames.length < 5000
              ? [...this.devNames.all(), ...this.injNames, ...this.rails.map((r) => r.name)]
              : [];
          this.sink.error(
            a.from,
            a.to,
            `current() of unknown device, inject or rail '${a.name}'`,
            suggest(a.name, cands),
          );
        }
      }
    }
  }
}

/** The result for a text longer than the limit: one error at 1:1, nothing parsed. */
export function tooLargeResult(
  size: number,
  unit: "characters" | "bytes",
  limit = DEFAULT_LIMITS.maxSourceLength,
): ElaborationResult {
  const sink = new DiagnosticSink("", 1);
  const mb = limit / (1024 * 1024);
  sink.error(
    0,
    0,
    `the file is too large: ${size.toLocaleString("en-US")} ${unit}, the limit is ${mb.toLocaleString("en-US")} MB`,
    "use for loops instead of writing every device out",
  );
  return { network: null, diagnostics: sink.finish(), ok: false, name: null };
}

export function elaborateText(text: string, options: ElaborateOptions = {}): ElaborationResult {
  const limits: Limits = { ...DEFAULT_LIMITS, ...options.limits };
  if (text.length > limits.maxSourceLength) return tooLargeResult(text.length, "characters", limits.maxSourceLength);
  return new Elaborator(text, limits).run();
}
