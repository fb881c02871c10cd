/**
 * Compact names for million-element networks. A `for` loop makes its node and device names from a template such as
 * `n{i}_{j+1}`: names of one *shape* (the literal parts "n", "_", "") differ only in their whole-number pieces. So a
 * name is stored as its shape and piece values (`NameColumn`) and made into a string only when read, and the
 * element a name stands for is found by its piece values in a dense table per shape (`PieceIndex`) instead of a
 * string Map. What the language means by a name does not change: a name is its string, and two elements of one
 * kind never share one. The tables here only decide when that can be known without making the string.
 *
 * Invariant of a `PieceIndex`: an entry is stored only after the name it stands for has that element index, and
 * indices never change, so a hit is exact; a miss proves that no such element exists only while the index is
 * `complete` (no element of that kind may carry one of the shape's names without being in it). A shape is compared
 * with the other shapes and fixed names of its kind when first used (`NameRegistry.register`): where two may share
 * a name, neither is complete.
 */
import { IntColumn } from "./columns";

/** Names by index (a string array, or a NameColumn). */
export interface NameSource {
  readonly length: number;
  at(i: number): string | undefined;
}

/**
 * The literal parts of an interpolated name: `n{i}_{j+1}` has lits ["n", "_", ""]. One object per distinct list
 * of literals in a file (`ShapeTable`); `id` indexes the table's list.
 */
export interface Shape {
  readonly lits: string[];
  readonly id: number;
}

/** Largest piece value a PieceIndex holds, and most entries all of one elaboration's indexes hold. */
export const PIECE_BOUND = 1 << 22;
const PIECE_BUDGET = 16_000_000;
/** Most name shapes compared with each other, per kind (nodes, devices); beyond, names are looked up as strings. */
const SHAPES_TRACKED = 256;
/** Fixed names compared with name shapes, per kind; beyond this many, every shape looks names up. */
const FIXED_SEEN = 256;

/** The name shapes of one file, and the entry budget their piece indexes share. */
export class ShapeTable {
  readonly list: Shape[] = [];
  readonly budget = { left: PIECE_BUDGET };
  private readonly byLits = new Map<string, Shape>();

  /** The shape with these literal parts (made on first use). */
  of(lits: string[]): Shape {
    const key = lits.join("\u0001");
    let shape = this.byLits.get(key);
    if (!shape) {
      shape = { lits, id: this.list.length };
      this.byLits.set(key, shape);
      this.list.push(shape);
    }
    return shape;
  }
}

/** The name of shape lits (one or two pieces) for piece values a, b. */
export function shapeName(lits: string[], a: number, b: number): string {
  return lits.length === 2 ? lits[0] + a + lits[1] : lits[0] + a + lits[1] + b + lits[2];
}

/**
 * Element names: a string, or a shape and its piece values made into the string only when asked (most names are
 * never read while elaborating). `at(i)` is the same string the shape's template makes for those values.
 */
export class NameColumn implements NameSource {
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

/** A name → index Map filled on demand from a names array (names are unique): names[0, filled) are in it, in order. */
export class LazyIndex {
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
 * Element indices by the one or two whole-number pieces of names of one shape, in dense Int32 rows (index + 1;
 * 0 unknown). See the module comment for what a hit and a miss mean.
 */
export class PieceIndex {
  /** False once a name of this shape may be carried by an element that is not in it. */
  complete = true;
  /** The shape was compared with the other shapes of its kind. */
  registered = false;
  /** Size of the rail/inject/probe/param namespace when `kindClash` was worked out (devices only; -1 never). */
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

/**
 * The names of one kind of element (nodes, or devices): the column of names, the name Map filled on demand, a
 * PieceIndex per shape, and which shapes and fixed names were compared (see `register`).
 */
export class NameRegistry {
  readonly names: NameColumn;
  /** Filled on demand; see NodeNames and DeviceNames for which names it holds before that. */
  readonly index: LazyIndex;
  private readonly pieceIndexes: (PieceIndex | undefined)[] = [];
  /** Shapes compared so far (interpolated names made), in order. */
  private readonly shapes: Shape[] = [];
  private readonly registered = new Set<Shape>();
  /** Fixed names made without a PieceIndex (up to FIXED_SEEN). */
  private readonly fixed: string[] = [];
  private fixedOverflow = false;
  /** More than SHAPES_TRACKED shapes: no shape is complete any more. */
  private shapesOff = false;

  constructor(private readonly table: ShapeTable) {
    this.names = new NameColumn(table.list);
    this.index = new LazyIndex(this.names);
  }

  get length(): number {
    return this.names.length;
  }

  /** The PieceIndex of a shape of one or two pieces (made on first use). */
  pieceIndex(shape: Shape, pieces: number): PieceIndex {
    return (this.pieceIndexes[shape.id] ??= new PieceIndex(pieces, this.table.budget));
  }

  /** First use of a shape: its index is complete unless another shape or fixed name made so far may share a name. */
  register(shape: Shape): void {
    this.registered.add(shape);
    const own = this.pieceIndexes[shape.id];
    if (own) own.registered = true;
    if (this.shapes.length >= SHAPES_TRACKED) {
      // Too many to compare: every name is looked up as a string from now on.
      if (own) own.complete = false;
      if (!this.shapesOff) {
        for (const o of this.shapes) this.incomplete(o);
        this.index.full();
      }
      this.shapesOff = true;
      return;
    }
    let overlap = this.fixedOverflow;
    for (const f of this.fixed) if (mayShareName(shape.lits, [f])) overlap = true;
    for (const o of this.shapes) {
      if (mayShareName(shape.lits, o.lits)) {
        overlap = true;
        this.incomplete(o);
      }
    }
    if (own && overlap) own.complete = false;
    this.shapes.push(shape);
  }

  /** Notes an element named `name` made without its shape's PieceIndex (shape null: a fixed name). */
  madeWithoutIndex(shape: Shape | null, name: string): void {
    if (this.shapesOff) {
      if (shape) this.incomplete(shape);
      return;
    }
    if (shape !== null) {
      if (!this.registered.has(shape)) this.register(shape);
      this.incomplete(shape);
      return;
    }
    for (const o of this.shapes) if (mayShareName([name], o.lits)) this.incomplete(o);
    if (this.fixed.length < FIXED_SEEN) this.fixed.push(name);
    else this.fixedOverflow = true;
  }

  /** Whether some element made so far may carry a name of this shape (a fixed name is a shape of one literal). */
  mayCarry(lits: string[]): boolean {
    if (this.fixedOverflow || this.shapesOff) return true;
    for (const f of this.fixed) if (mayShareName(lits, [f])) return true;
    for (const o of this.shapes) if (mayShareName(lits, o.lits)) return true;
    return false;
  }

  /**
   * The element named `name`, read through the PieceIndex of complete shapes before the name Map; valid only
   * while every element that is not in the Map was made through the index of a shape that was complete then.
   */
  protected findByPieces(name: string): number | undefined {
    if (!this.index.pending()) return this.index.full().get(name);
    const lit = [name];
    const out = this.pieceOut;
    for (const o of this.shapes) {
      if (!mayShareName(lit, o.lits)) continue;
      const own = this.pieceIndexes[o.id];
      const r = own && own.complete ? readPieces(name, o.lits, out) : -1;
      if (r < 0) return this.index.full().get(name);
      if (r === 1) {
        const hit = own!.get(out[0], out[1]);
        if (hit >= 0) return hit;
      }
    }
    return this.index.partial().get(name);
  }
  private readonly pieceOut = [0, 0];

  private incomplete(shape: Shape): void {
    const own = this.pieceIndexes[shape.id];
    if (own) own.complete = false;
  }
}

/**
 * Node names. Invariant: a node not yet in the name Map was made through the PieceIndex of a shape that was
 * complete then, and is in that index; a node made any other way enters the Map at once.
 */
export class NodeNames extends NameRegistry {
  /** The node named `name`, if any. */
  find(name: string): number | undefined {
    return this.findByPieces(name);
  }
}

/** Device names. Devices enter the name Map only when it is read, so a look-up by string fills it. */
export class DeviceNames extends NameRegistry {
  /** Whether a device carries `name`. */
  has(name: string): boolean {
    return this.mayCarry([name]) && this.index.full().has(name);
  }

  /** The device named `name`, if any. */
  find(name: string): number | undefined {
    return this.index.full().get(name);
  }
}

/**
 * False only when no string can be a name of both shapes (a fixed name is a shape of one literal). A name of shape
 * lits is lits[0] D lits[1] D … with D a non-empty run of digits; compared here: the literal before the first
 * piece, the literal after the last, and the length of a fixed name.
 */
export function mayShareName(a: string[], b: string[]): boolean {
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
 * Reads `name` as a name of shape lits (one or two pieces): 1 with the piece values in out; 0 when it is not such
 * a name or a piece is not below PIECE_BOUND; -1 when the shape does not read unambiguously (a literal after a
 * piece that is empty between pieces or starts with a digit).
 */
export function readPieces(name: string, lits: string[], out: number[]): number {
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

/** A digit, or -1 (the digit a piece stands for, in `endsAgree`). */
function isDigit(c: number): boolean {
  return c === -1 || (c >= 48 && c <= 57);
}
