/**
 * What an elaboration has made so far: the node, device and inject tables as growable columns (finished into the
 * network's typed arrays), and the one namespace that rails, injects, probes, params and devices share.
 */
import { ByteColumn, FloatColumn, IntColumn } from "./columns";
import type { DiagnosticSink, LineIndex } from "./diagnostics";
import { DeviceNames, mayShareName, NodeNames, type Shape, type ShapeTable } from "./names";
import type { DeviceTable, InjectTable, NodeTable, RailDef, Span } from "./network";

/** The nodes: internal nodes and rails, in the order they were first named. */
export class NodeColumns {
  readonly names: NodeNames;
  /** Fixed voltage of a rail, NaN for an internal node. */
  readonly railValue = new FloatColumn();
  readonly isRail = new ByteColumn();
  /** Span of the name that first made each node. */
  readonly from = new IntColumn();
  readonly to = new IntColumn();
  /** Shape id of the template that made each node through its PieceIndex, -1 otherwise. */
  readonly shape = new IntColumn();
  readonly rails: RailDef[] = [];
  /** Nodes whose follow-up diagnostics are silenced (a statement that names them could not be elaborated). */
  readonly suppressed = new Set<number>();

  constructor(shapes: ShapeTable) {
    this.names = new NodeNames(shapes);
  }

  get length(): number {
    return this.names.length;
  }

  /** A new internal node named `name`, or (name null) the name of `shape` for piece values a, b. */
  add(span: Span, name: string | null, shape: Shape | null, a: number, b: number): number {
    const i = this.names.length;
    if (name !== null) this.names.names.pushName(name);
    else this.names.names.pushPieces(shape!.id, a, b);
    this.railValue.push(NaN);
    this.isRail.push(0);
    this.from.push(span.from);
    this.to.push(span.to);
    this.shape.push(-1);
    return i;
  }

  /** The rail declared at node `node`, if it is one. */
  rail(node: number): RailDef | undefined {
    return this.rails.find((r) => r.node === node);
  }

  finish(): NodeTable {
    const index = this.names.index;
    return {
      // Made here, not on demand: every solver reads nodes.names.
      names: this.names.names.all(),
      get index() {
        return index.full();
      },
      railValue: this.railValue.finish(),
    };
  }
}

/** The devices, with their terminals (node indices, SUBSTRATE for an nfet without bulk) and sizes. */
export class DeviceColumns {
  readonly names: DeviceNames;
  readonly type = new ByteColumn();
  readonly gate = new IntColumn();
  readonly source = new IntColumn();
  readonly drain = new IntColumn();
  readonly bulk = new IntColumn();
  readonly w = new FloatColumn();
  readonly l = new FloatColumn();
  /** Offset of the statement that made each device. */
  readonly at = new IntColumn();

  constructor(shapes: ShapeTable) {
    this.names = new DeviceNames(shapes);
  }

  get length(): number {
    return this.names.length;
  }

  /** Room for `n` devices in all (no copy later while they are made). */
  reserve(n: number): void {
    if (n <= this.gate.data.length) return;
    for (const c of [this.gate, this.source, this.drain, this.bulk, this.at]) c.reserve(n);
    this.names.names.reserve(n);
    this.type.reserve(n);
    this.w.reserve(n);
    this.l.reserve(n);
  }

  /** Offset of the statement that made the device `name`, if there is one. */
  declaredAt(name: string): number | undefined {
    const i = this.names.find(name);
    return i === undefined ? undefined : this.at.data[i];
  }

  finish(): DeviceTable {
    const names = this.names.names;
    const index = this.names.index;
    return {
      count: this.length,
      get names() {
        return names.all();
      },
      get index() {
        return index.full();
      },
      type: this.type.finish(),
      gate: this.gate.finish(),
      source: this.source.finish(),
      drain: this.drain.finish(),
      bulk: this.bulk.finish(),
      w: this.w.finish(),
      l: this.l.finish(),
      at: this.at.finish(),
    };
  }
}

/** The ideal current sources. */
export class InjectColumns {
  readonly names: string[] = [];
  readonly index = new Map<string, number>();
  readonly from = new IntColumn();
  readonly to = new IntColumn();
  readonly value = new FloatColumn();
  readonly at = new IntColumn();

  get length(): number {
    return this.names.length;
  }

  finish(): InjectTable {
    return {
      count: this.names.length,
      names: this.names,
      index: this.index,
      from: this.from.finish(),
      to: this.to.finish(),
      value: this.value.finish(),
      at: this.at.finish(),
    };
  }
}

/** What a name may be besides a node, as messages say it. */
export type Kind = "a rail" | "a device" | "an inject" | "a probe" | "a param" | "an expectation";

/**
 * One namespace: a name means one thing. Rails, injects, probes and params are recorded here by name; devices are
 * asked through their own names (there may be millions).
 */
export class Namespace {
  /** Kind of every rail, inject, probe and param name made so far. */
  private readonly kinds = new Map<string, Kind>();
  /** Where each of them was declared (offset of its name). */
  private readonly declaredAt = new Map<string, number>();
  /** Names that statements with errors mention: follow-up diagnostics about them are silenced. */
  readonly broken = new Set<string>();
  /** Built-in names a rail statement tried to declare (reported there, not at every pin). */
  readonly reservedRails = new Set<string>();

  constructor(
    private readonly devices: DeviceColumns,
    private readonly sink: DiagnosticSink,
    private readonly lines: LineIndex,
  ) {}

  /** How many rail, inject, probe and param names there are (names only join). */
  get size(): number {
    return this.kinds.size;
  }

  /** `name` now means `kind`, declared at offset `at`. */
  declare(name: string, kind: Kind, at: number): void {
    this.kinds.set(name, kind);
    this.declaredAt.set(name, at);
  }

  kindOf(name: string): Kind | undefined {
    return this.kinds.get(name);
  }

  /** Whether a rail, inject, probe or param name may be a name of this shape. */
  mayShare(lits: string[]): boolean {
    for (const k of this.kinds.keys()) if (mayShareName(lits, [k])) return true;
    return false;
  }

  /** What else carries `name` besides `self`, or null. */
  other(name: string, self: Kind): Kind | null {
    const k = this.kinds.get(name);
    if (k !== undefined && k !== self) return k;
    if (self !== "a device" && this.devices.names.has(name)) return "a device";
    return null;
  }

  /** Reports `kind` name `name` at `span` as already being `other`. */
  clash(kind: string, name: string, span: Span, other: Kind): void {
    const at = other === "a device" ? this.devices.declaredAt(name) : this.declaredAt.get(name);
    const where = at !== undefined ? ` (first on line ${this.lines.position(at).line})` : "";
    this.sink.error(
      span.from,
      span.to,
      `${kind} name '${name}' is already ${other}${where}`,
      "every name means one thing: rename one of them",
    );
  }
}
