/**
 * Instantiation: runs the templates of element statements and `for` blocks, making nodes, devices, injects, rails
 * and probes. A `for VAR in A..B` runs its body for every integer from A to B (both included), with `{…}` name pieces
 * evaluated in that iteration; every name a statement makes is checked against the one namespace. The work of one
 * file is bounded (`maxWork` statement runs, `maxDevices`, `maxElements`): a loop that would pass a bound stops the
 * elaboration with one error at the loop, never a hang.
 *
 * Node and device names of a loop are made through their shape's PieceIndex where that is exact (names.ts), so a
 * million-device loop makes no name string and no Map look-up per device.
 */
import type { NameTpl, NamePiece } from "./compile";
import type { Elaboration } from "./context";
import { fmt } from "./diagnostics";
import { type PieceIndex, PIECE_BOUND, shapeName } from "./names";
import { SUBSTRATE } from "./network";
import type { NamedAt, PendingRead, ReadTpl } from "./reads";
import type { Kind } from "./tables";
import type { DeviceTpl, ForTpl, InjectTpl, ProbeTpl, RailTpl, Tpl } from "./templates";
import type { ValueTpl } from "./values";
import { DEFAULT_L, DEFAULT_W } from "./vocabulary";

/** Thrown to stop an elaboration that passed a bound (after reporting it). */
export class Aborted extends Error {}

/** Most rail, inject, probe and param names compared with a device name shape; beyond, every device looks its name up. */
const KIND_SCAN = 64;

/** A piece value is usable as a PieceIndex key: a whole number in [0, PIECE_BOUND). */
function isPieceKey(v: number): boolean {
  return v >= 0 && v < PIECE_BOUND && Number.isInteger(v);
}

export class Instantiator {
  private readonly values;
  private readonly loopValues: number[];
  private readonly nodes;
  private readonly nodeNames;
  private readonly devices;
  private readonly devNames;
  private work = 0;
  /** The top-level `for` running now (where a loop that passes a bound is reported). */
  outerFor: { from: number; to: number } | null = null;
  /** The innermost running loop's variable (for hints). */
  private loopVar = "k";
  /** Piece values of the last name `pieceValues` read. */
  private pieceA = 0;
  private pieceB = 0;

  constructor(private readonly cx: Elaboration) {
    this.values = cx.values;
    this.loopValues = cx.values.loopValues;
    this.nodes = cx.nodes;
    this.nodeNames = cx.nodes.names;
    this.devices = cx.devices;
    this.devNames = cx.devices.names;
  }

  /** Runs the templates once, in order. */
  exec(tpls: Tpl[]): void {
    const limits = this.cx.limits;
    for (const t of tpls) {
      if (++this.work > limits.maxWork)
        this.overflow(t, `more than ${limits.maxWork.toLocaleString("en-US")} statements to run (the limit)`);
      if (t.k === "device") this.device(t);
      else if (t.k === "inject") this.inject(t);
      else if (t.k === "rail") this.rail(t);
      else if (t.k === "probe") this.probe(t);
      else this.forBlock(t);
    }
  }

  /** Reports a bound passed (at the running top-level loop, else at the statement) and stops the elaboration. */
  private overflow(t: { at: number } | { from: number; to: number }, what: string): never {
    const { lines, sink } = this.cx;
    const span = this.outerFor ?? ("at" in t ? { from: t.at, to: t.at } : t);
    const to = this.outerFor ? Math.min(span.to, lines.lineEnd(span.from)) : lines.lineEnd(span.from);
    sink.error(
      span.from,
      to,
      `${this.outerFor ? "this loop makes" : "this makes"} ${what}`,
      "reduce the loop ranges or split the network",
    );
    throw new Aborted();
  }

  // ---------------------------------------------------------------- loops

  /**
   * Sizes the device columns for the devices a top-level loop makes when its bounds are known before it runs.
   * Nothing is reserved for a loop that would pass the device limit (it stops with an error).
   */
  reserveDevices(t: ForTpl): void {
    const n = this.devices.length + this.devicesOf([t]);
    if (n <= this.cx.limits.maxDevices) this.devices.reserve(n);
  }

  /** Devices the templates make, counting loops whose bounds do not depend on an enclosing loop. */
  private devicesOf(ts: Tpl[]): number {
    const max = this.cx.limits.maxDevices;
    let n = 0;
    for (const t of ts) {
      if (t.k === "device") n++;
      else if (t.k === "for") {
        const count = this.fixedCount(t);
        if (count > 0) n += count * this.devicesOf(t.body);
      }
      if (n > max) return max;
    }
    return n;
  }

  /** Iterations of a loop whose bounds do not depend on an enclosing loop; -1 when unknown before it runs. */
  private fixedCount(t: ForTpl): number {
    if (!t.first || !t.last || t.first.loopDependent || t.last.loopDependent) return -1;
    const count = this.values.valueOf(t.last) - this.values.valueOf(t.first) + 1;
    return Number.isSafeInteger(count) && count > 0 ? count : 0;
  }

  /**
   * Statement runs of executing `ts` once, as `exec` and `forBlock` count them: one per statement, and per loop
   * iteration one plus its body's. A loop whose bounds depend on an enclosing loop counts as one run (then
   * `exact` is false: the total is a lower bound).
   */
  private runsOf(ts: Tpl[]): { runs: number; exact: boolean } {
    let runs = 0;
    let exact = true;
    for (const t of ts) {
      runs++;
      if (t.k !== "for") continue;
      const count = this.fixedCount(t);
      if (count < 0) {
        exact = false;
        continue;
      }
      if (count === 0) continue;
      const body = this.runsOf(t.body);
      runs += count * (1 + body.runs);
      exact &&= body.exact;
    }
    return { runs, exact };
  }

  /** `for VAR in A..B { … }`: the body once for every integer from A to B. */
  private forBlock(t: ForTpl): void {
    const { sink, limits } = this.cx;
    const a = this.values.valueOf(t.first!);
    const b = this.values.valueOf(t.last!);
    for (const [v, s] of [
      [a, t.first!],
      [b, t.last!],
    ] as const) {
      if (!Number.isSafeInteger(v)) {
        sink.error(
          s.from,
          s.to,
          `a loop bound must be a whole number, but this is ${fmt(v)}`,
          "use round(), floor() or ceil()",
        );
        return this.silenceBody(t.body);
      }
    }
    if (b < a) {
      sink.error(
        t.rangeFrom,
        t.rangeTo,
        `reversed range ${a}..${b}: a range runs upward and includes both ends`,
        `write ${b}..${a}`,
      );
      return this.silenceBody(t.body);
    }
    const count = b - a + 1;
    const body = this.runsOf(t.body);
    const runs = count * (1 + body.runs);
    if (this.work + runs > limits.maxWork) {
      const limit = limits.maxWork.toLocaleString("en-US");
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
    const scope = this.values.scope;
    const outerVar = this.loopVar;
    this.loopVar = t.variable;
    for (let v = a; v <= b; v++) {
      lv[t.slot] = v;
      scope.set(t.variable, v);
      this.work++;
      this.exec(t.body);
    }
    this.loopVar = outerVar;
    scope.delete(t.variable);
  }

  /** Silences follow-up diagnostics about the names a skipped body mentions. */
  private silenceBody(ts: Tpl[]): void {
    for (const t of ts) {
      if (t.k === "device") this.silence(t.nodes);
      else if (t.k === "inject") this.silence([t.from, t.to]);
      else if (t.k === "rail") this.silence([t.name]);
      else if (t.k === "for") this.silenceBody(t.body);
    }
  }

  private silence(refs: (NameTpl | null)[]): void {
    const { namespace, nodes } = this.cx;
    for (const r of refs) {
      if (!r) continue;
      const name = r.fixed ?? null;
      if (name === null) continue;
      namespace.broken.add(name);
      const i = this.nodeNames.find(name);
      if (i !== undefined) nodes.suppressed.add(i);
    }
  }

  /** A statement that cannot make its element: its own name and its nodes stop follow-up diagnostics. */
  private skipElement(name: NameTpl, refs: (NameTpl | null)[]): void {
    const n = this.nameOf(name);
    if (n !== null) this.cx.namespace.broken.add(n);
    this.silence(refs);
  }

  // ---------------------------------------------------------------- names

  /** The value of a `{…}` piece in this iteration. */
  private piece(p: NamePiece): number {
    return p.slot >= 0 ? this.loopValues[p.slot] + p.offset : this.values.valueOf(p.value);
  }

  /** The name a template makes in this iteration, or null after reporting a piece that is not a whole number ≥ 0. */
  private nameOf(t: NameTpl): string | null {
    if (t.fixed !== null) return t.fixed;
    let s = "";
    for (const p of t.parts) {
      if (typeof p === "string") {
        s += p;
        continue;
      }
      const v = this.piece(p);
      if (!Number.isSafeInteger(v) || v < 0) {
        this.cx.sink.error(
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
   * Whether the pieces of template t (one or two) are PieceIndex keys; the values go to pieceA / pieceB. When
   * not, nameOf makes the name or reports the bad piece.
   */
  private pieceValues(t: NameTpl): boolean {
    const ps = t.pieces;
    const a = this.piece(ps[0]);
    if (!isPieceKey(a)) return false;
    const b = ps.length === 1 ? 0 : this.piece(ps[1]);
    if (!isPieceKey(b)) return false;
    this.pieceA = a;
    this.pieceB = b;
    return true;
  }

  /** The node a pin names in this iteration, made on first use; -1 after an error in its name. */
  private nodeOf(t: NameTpl): number {
    if (t.fixed !== null) {
      if (t.fixedNode < 0) t.fixedNode = this.nodeByName(t, t.fixed);
      return t.fixedNode;
    }
    const shape = t.shape;
    if (shape !== null && t.pieces.length <= 2) {
      const names = this.nodeNames;
      const index = names.pieceIndex(shape, t.pieces.length);
      if (this.pieceValues(t)) {
        const a = this.pieceA;
        const b = this.pieceB;
        const hit = index.get(a, b);
        if (hit >= 0) return hit;
        if (!index.registered) names.register(shape);
        if (index.complete && index.set(a, b, names.length)) {
          // No other node can carry this name: make it without a Map look-up (or its string).
          const i = this.newNode(t, null, a, b);
          this.nodes.shape.data[i] = shape.id;
          return i;
        }
        index.complete = false;
        const before = names.length;
        const i = this.nodeByName(t, shapeName(shape.lits, a, b));
        if (index.set(a, b, i) && i === before) this.nodes.shape.data[i] = shape.id;
        return i;
      }
    }
    return this.nodeByName(t, this.nameOf(t));
  }

  /** The node named `name`, looked up or made (made: in the name Map at once, see NodeNames). */
  private nodeByName(t: NameTpl, name: string | null): number {
    if (name === null) return -1;
    let i = this.nodeNames.find(name);
    if (i === undefined) {
      i = this.newNode(t, name, 0, 0);
      this.nodeNames.index.full();
      this.nodeNames.madeWithoutIndex(t.shape, name);
    }
    return i;
  }

  /** A new node named `name`, or (name null) the name of t's shape for piece values a, b. */
  private newNode(t: NameTpl, name: string | null, a: number, b: number): number {
    const i = this.nodes.add(t, name, t.shape, a, b);
    const broken = this.cx.namespace.broken;
    if (broken.size > 0 && broken.has(name ?? this.nodeNames.names.at(i)!)) this.nodes.suppressed.add(i);
    return i;
  }

  /** Reports `kind` `name` as made twice. */
  private duplicate(kind: string, name: string, t: NameTpl, firstAt: number): void {
    const hint =
      t.fixed !== null && this.outerFor !== null
        ? `inside a for block a name needs a {…} piece, e.g. ${name}{${this.loopVar}}`
        : "every name means one thing";
    this.cx.sink.error(
      t.from,
      t.to,
      `${kind} '${name}' is defined twice (first on line ${this.cx.line(firstAt)})`,
      hint,
    );
  }

  // ---------------------------------------------------------------- elements

  /** A device's w or l in this iteration (NaN after reporting one that is not a positive length). */
  private length(t: ValueTpl | null, key: "w" | "l", fallback: number): number {
    if (!t) return fallback;
    const { sink } = this.cx;
    const v = this.values.valueOf(t);
    if (!(v > 0 && Number.isFinite(v))) {
      sink.error(t.from, t.to, `${key} must be a positive length in metres, but it is ${fmt(v)}`);
      return NaN;
    }
    if (v > 1e-3 || v < 1e-9) {
      sink.warning(
        t.from,
        t.to,
        `${key} is ${fmt(v)} m, outside 1 nm to 1 mm: lengths are in metres`,
        `write ${key}=2u for 2 µm`,
      );
    }
    return v;
  }

  /** `nfet` / `pfet`: a device between existing or new nodes, its name unique among devices and other names. */
  private device(t: DeviceTpl): void {
    if (t.broken) return this.skipElement(t.name, t.nodes);
    const { limits, namespace } = this.cx;
    const devices = this.devices;
    const devNames = this.devNames;
    const shape = t.name.shape;
    let index: PieceIndex | null = null;
    // Made only when needed while index is set: a shape name from pieceA, pieceB.
    let name: string | null = null;
    if (shape !== null && t.name.pieces.length <= 2) {
      index = devNames.pieceIndex(shape, t.name.pieces.length);
      if (!index.registered) devNames.register(shape);
      if (!this.pieceValues(t.name)) index = null;
    }
    const a = this.pieceA;
    const bb = this.pieceB;
    if (index === null) {
      name = this.nameOf(t.name);
      if (name === null) return this.silence(t.nodes);
    }
    const g = this.nodeOf(t.nodes[0]!);
    const s = this.nodeOf(t.nodes[1]!);
    const d = this.nodeOf(t.nodes[2]!);
    const b = t.nodes[3] ? this.nodeOf(t.nodes[3]) : SUBSTRATE;
    if (g < 0 || s < 0 || d < 0 || (t.nodes[3] && b < 0)) return;
    const w = this.length(t.w, "w", DEFAULT_W);
    const l = this.length(t.l, "l", DEFAULT_L);
    const i = devices.length;
    let first: number | undefined;
    if (index !== null) {
      const hit = index.get(a, bb);
      first = hit >= 0 ? hit : index.complete ? undefined : devNames.find((name = shapeName(shape!.lits, a, bb)));
    } else first = devNames.find(name!);
    if (first !== undefined) {
      this.silence(t.nodes);
      return this.duplicate("device", name ?? shapeName(shape!.lits, a, bb), t.name, devices.at.data[first]);
    }
    let other: Kind | null = null;
    const kinds = namespace.size;
    if (index !== null && kinds <= KIND_SCAN) {
      // Names only join the namespace, so a shape checked at this size still cannot match.
      if (index.kindSize !== kinds) {
        index.kindClash = namespace.mayShare(shape!.lits);
        index.kindSize = kinds;
      }
      if (index.kindClash) other = namespace.other((name ??= shapeName(shape!.lits, a, bb)), "a device");
    } else if (kinds) other = namespace.other((name ??= shapeName(shape!.lits, a, bb)), "a device");
    if (other) {
      this.silence(t.nodes);
      return namespace.clash("device", name!, t.name, other);
    }
    if (i >= limits.maxDevices) {
      this.overflow(t, `more than ${limits.maxDevices.toLocaleString("en-US")} devices (the limit)`);
    }
    if (index === null || !index.set(a, bb, i))
      devNames.madeWithoutIndex(shape, (name ??= shapeName(shape!.lits, a, bb)));
    if (name === null) devNames.names.pushPieces(shape!.id, a, bb);
    else devNames.names.pushName(name);
    devices.type.push(t.type);
    devices.gate.push(g);
    devices.source.push(s);
    devices.drain.push(d);
    devices.bulk.push(b);
    devices.w.push(w);
    devices.l.push(l);
    devices.at.push(t.at);
    if (t.w) this.values.bind(t.w, { kind: "w", index: i });
    if (t.l) this.values.bind(t.l, { kind: "l", index: i });
  }

  /** `inject`: `value` amperes from one node to another. */
  private inject(t: InjectTpl): void {
    if (t.broken) return this.skipElement(t.name, [t.from, t.to]);
    const { sink, limits, namespace, injects } = this.cx;
    const name = this.nameOf(t.name);
    if (name === null) return this.silence([t.from, t.to]);
    const f = this.nodeOf(t.from!);
    const to = this.nodeOf(t.to!);
    if (f < 0 || to < 0) return;
    const v = this.values.valueOf(t.value!);
    if (!Number.isFinite(v)) {
      sink.error(t.value!.from, t.value!.to, `an inject value must be a finite current, but it is ${fmt(v)}`);
      return;
    }
    const first = injects.index.get(name);
    if (first !== undefined) {
      this.silence([t.from, t.to]);
      return this.duplicate("inject", name, t.name, injects.at.data[first]);
    }
    const other = namespace.other(name, "an inject");
    if (other) {
      this.silence([t.from, t.to]);
      return namespace.clash("inject", name, t.name, other);
    }
    if (f === to)
      sink.warning(
        t.to!.from,
        t.to!.to,
        `inject '${name}' goes from node '${this.nodeNames.names.at(f)}' to itself`,
        "its current has no effect",
      );
    if (injects.length >= limits.maxElements)
      this.overflow(t, `more than ${limits.maxElements.toLocaleString("en-US")} injects (the limit)`);
    const i = injects.length;
    injects.names.push(name);
    injects.index.set(name, i);
    namespace.declare(name, "an inject", t.name.from);
    injects.from.push(f);
    injects.to.push(to);
    injects.value.push(v);
    injects.at.push(t.at);
    this.values.bind(t.value!, { kind: "inject", index: i });
  }

  /** `rail`: a node held at a fixed voltage (an internal node named before becomes the rail). */
  private rail(t: RailTpl): void {
    const { sink, limits, namespace } = this.cx;
    const nodes = this.nodes;
    const name = this.nameOf(t.name);
    if (name === null) return;
    if (!t.value) namespace.broken.add(name);
    let v = t.value ? this.values.valueOf(t.value) : NaN;
    if (t.value && !Number.isFinite(v)) {
      sink.error(t.value.from, t.value.to, `a rail value must be a finite voltage, but it is ${fmt(v)}`);
    }
    const existing = this.nodeNames.find(name);
    if (existing !== undefined && nodes.isRail.data[existing]) {
      const first = nodes.rail(existing);
      return this.duplicate("rail", name, t.name, first ? first.span.from : t.at);
    }
    const other = namespace.other(name, "a rail");
    if (other) return namespace.clash("rail", name, t.name, other);
    if (nodes.rails.length >= limits.maxElements)
      this.overflow(t, `more than ${limits.maxElements.toLocaleString("en-US")} rails (the limit)`);
    const i = this.nodeOf(t.name);
    if (i < 0) return;
    if (!Number.isFinite(v)) {
      nodes.suppressed.add(i);
      v = 0;
    }
    nodes.isRail.data[i] = 1;
    nodes.railValue.data[i] = v;
    nodes.rails.push({ name, node: i, span: { from: t.name.from, to: t.name.to } });
    namespace.declare(name, "a rail", t.name.from);
    if (t.value) this.values.bind(t.value, { kind: "rail", node: i });
  }

  /** `probe`: an output, its voltage() and current() arguments resolved when every element is made. */
  private probe(t: ProbeTpl): void {
    const { limits, namespace, probes, probeAt } = this.cx;
    const name = this.nameOf(t.name);
    if (name === null) return;
    const first = probeAt.get(name);
    if (first !== undefined) return this.duplicate("probe", name, t.name, first);
    const other = namespace.other(name, "a probe");
    if (other) return namespace.clash("probe", name, t.name, other);
    if (probes.length >= limits.maxElements)
      this.overflow(t, `more than ${limits.maxElements.toLocaleString("en-US")} probes (the limit)`);
    const args = this.reads(t.args);
    if (!args) return;
    probeAt.set(name, t.at);
    namespace.declare(name, "a probe", t.name.from);
    probes.push({
      name,
      span: { from: t.name.from, to: t.name.to },
      fn: t.fn!,
      loopNames: t.loopNames,
      loopValues: this.loopValues.slice(0, t.loopNames.length),
      args,
      dim: t.dim,
    });
  }

  /** The reads of an expression with their names made in this iteration; null after reporting a bad name piece. */
  reads(tpls: readonly ReadTpl[]): PendingRead[] | null {
    const out: PendingRead[] = [];
    for (const a of tpls) {
      if (a.kind === "power") {
        const rails: NamedAt[] = [];
        for (const r of a.rails) {
          const n = this.nameOf(r);
          if (n === null) return null;
          rails.push({ name: n, from: r.from, to: r.to });
        }
        const from = a.rails[0]?.from ?? -1;
        out.push({ kind: "power", rails, from, to: a.rails.at(-1)?.to ?? from });
        continue;
      }
      const n = this.nameOf(a.name);
      if (n === null) return null;
      out.push({ kind: a.kind, name: n, from: a.name.from, to: a.name.to });
    }
    return out;
  }
}
