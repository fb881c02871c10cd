/**
 * The statements that make elements (`nfet`, `pfet`, `inject`, `rail`, `probe`) and `for` blocks, compiled once
 * into templates: each pin checked against its element kind, each name and value compiled (compile.ts). A `for`
 * body is compiled once however many times the loop runs; instantiate.ts runs the templates.
 */
import type { SyntaxNode } from "@lezer/common";
import type { EvalFunction } from "mathjs/number";
import { Compiler, exprChild, exprChildren, fixedName, type NameTpl } from "./compile";
import type { Elaboration } from "./context";
import { type CallExpr, containsError, isBad } from "./expr";
import { inferDim } from "./dims";
import { NFET, PFET } from "./network";
import * as T from "./parser.terms";
import { suggest } from "./suggest";
import { readCall, type ReadTpl } from "./reads";
import { AMPERE, type Dim, DIMENSIONLESS, VOLT } from "./units";
import type { ValueTpl } from "./values";
import { ELEMENT_PINS, type ElementKind, pinsOf } from "./vocabulary";

export interface DeviceTpl {
  k: "device";
  type: typeof NFET | typeof PFET;
  at: number;
  name: NameTpl;
  /** gate, source, drain, bulk (nfet) or well (pfet). */
  nodes: (NameTpl | null)[];
  w: ValueTpl | null;
  l: ValueTpl | null;
  broken: boolean;
}
export interface InjectTpl {
  k: "inject";
  at: number;
  name: NameTpl;
  from: NameTpl | null;
  to: NameTpl | null;
  value: ValueTpl | null;
  broken: boolean;
}
export interface RailTpl {
  k: "rail";
  at: number;
  end: number;
  name: NameTpl;
  value: ValueTpl | null;
}
export interface ProbeTpl {
  k: "probe";
  at: number;
  end: number;
  name: NameTpl;
  fn: EvalFunction | null;
  loopNames: string[];
  args: ReadTpl[];
  /** The probe's dimension (what an expectation comparing it needs). */
  dim: Dim;
}
export interface ForTpl {
  k: "for";
  from: number;
  to: number;
  variable: string;
  /** Index of its variable in the loop values (its nesting depth). */
  slot: number;
  first: ValueTpl | null;
  last: ValueTpl | null;
  rangeFrom: number;
  rangeTo: number;
  body: Tpl[];
}
export type Tpl = DeviceTpl | InjectTpl | RailTpl | ProbeTpl | ForTpl;

/** The statements directly inside a syntax node (the file, or a block). */
export function statementsOf(node: SyntaxNode): SyntaxNode[] {
  const out: SyntaxNode[] = [];
  for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Statement")) out.push(c);
  return out;
}

export class Templates {
  constructor(
    private readonly cx: Elaboration,
    private readonly compiler: Compiler,
  ) {}

  /** A statement with its own syntax error is skipped (a `for` only for an error in its head or an unclosed block). */
  broken(s: SyntaxNode): boolean {
    if (s.type.id === T.ForStatement) {
      const block = s.getChild("Block");
      if (!block || block.lastChild?.name !== "}") return true;
      for (let c = s.firstChild; c && c !== block && c.from < block.from; c = c.nextSibling)
        if (containsError(c) || c.type.isError) return true;
      return false;
    }
    return containsError(s);
  }

  /** The names a skipped statement mentions silence follow-up errors about them. */
  noteBroken(s: SyntaxNode): void {
    const { namespace, nodes } = this.cx;
    const cur = s.cursor();
    let depth = 0;
    for (;;) {
      if (cur.name === "Identifier" || cur.name === "Definition") {
        const name = this.cx.text.slice(cur.from, cur.to);
        namespace.broken.add(name);
        const node = nodes.names.find(name);
        if (node !== undefined) nodes.suppressed.add(node);
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

  /** The template of an element statement or `for` block inside loops over `loopVars`; null after an error. */
  statement(s: SyntaxNode, loopVars: string[]): Tpl | null {
    switch (s.type.id) {
      case T.DeviceStatement:
        return this.device(s, loopVars);
      case T.InjectStatement:
        return this.inject(s, loopVars);
      case T.RailStatement:
        return this.rail(s, loopVars);
      case T.ProbeStatement:
        return this.probe(s, loopVars);
      case T.ForStatement:
        return this.forBlock(s, loopVars);
      default: {
        const kw = s.firstChild!;
        this.cx.sink.error(
          kw.from,
          kw.to,
          `'${this.cx.src(kw)}' belongs at the top level, not inside a for block`,
          "move it above the for statement",
        );
        return null;
      }
    }
  }

  private forBlock(s: SyntaxNode, loopVars: string[]): ForTpl | null {
    const { sink, limits, values, declared } = this.cx;
    const v = s.getChild("VariableName")!;
    const variable = this.cx.src(v);
    const range = s.getChild("Range")!;
    const block = s.getChild("Block")!;
    if (loopVars.length >= limits.maxLoopDepth) {
      sink.error(s.from, s.firstChild!.to, `for blocks nest deeper than ${limits.maxLoopDepth}`);
      return null;
    }
    let ok = this.compiler.checkValueName(variable, v.from, v.to, "loop variable");
    if (ok && loopVars.includes(variable)) {
      sink.error(
        v.from,
        v.to,
        `loop variable '${variable}' is already used by an enclosing for`,
        "give the inner loop another variable",
      );
      ok = false;
    }
    if (ok && (values.params.has(variable) || declared.params.has(variable))) {
      sink.error(v.from, v.to, `loop variable '${variable}' has the name of a param`, "give the loop another variable");
      ok = false;
    }
    const [a, b] = exprChildren(range);
    const bound = (node: SyntaxNode | undefined): ValueTpl | null => {
      if (!node) return null;
      const t = this.compiler.value(node, loopVars, DIMENSIONLESS, "a loop bound is a whole number");
      if (!t) return null;
      const sw = values.sweptDep(t);
      if (sw) {
        sink.error(
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
    for (const st of statementsOf(block)) {
      if (this.broken(st)) {
        this.noteBroken(st);
        continue;
      }
      const t = this.statement(st, inner);
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

  /** The pins written, by name; unknown and repeated pins reported. */
  private pins(s: SyntaxNode, kind: ElementKind): Map<string, SyntaxNode> {
    const allowed = pinsOf(kind);
    const got = new Map<string, SyntaxNode>();
    for (let p = s.getChild("Pin"); p; p = p.nextSibling) {
      if (p.type.id !== T.Pin) continue;
      const keyNode = p.getChild("PinName")!;
      const key = this.cx.src(keyNode);
      const value = exprChild(p);
      if (!allowed.includes(key)) {
        let hint = suggest(key, allowed) ?? `${kind} pins: ${allowed.join(", ")}`;
        if (kind === "pfet" && key === "bulk") hint = "a pfet's bulk is its well: write well=NODE";
        if (kind === "nfet" && key === "well")
          hint = "an nfet sits in the substrate; write bulk=NODE for a separate bulk";
        this.cx.sink.error(keyNode.from, keyNode.to, `${kind} has no pin '${key}'`, hint);
        continue;
      }
      if (got.has(key)) {
        this.cx.sink.error(keyNode.from, keyNode.to, `pin '${key}' is given twice`, "give each pin once");
        continue;
      }
      if (value) got.set(key, value);
    }
    return got;
  }

  /** Reports each required pin that is missing; true when one is. */
  private missingPins(def: SyntaxNode, kind: ElementKind, got: Map<string, SyntaxNode>): boolean {
    let missing = false;
    const name = this.cx.src(def);
    for (const key of ELEMENT_PINS[kind].required) {
      if (got.has(key)) continue;
      missing = true;
      if (kind === "pfet" && key === "well") {
        this.cx.sink.error(
          def.from,
          def.to,
          `pfet '${name}' has no well`,
          "add well=NODE: the n-well a pfet sits in, usually the positive rail",
        );
      } else {
        const example = key === "value" ? "value=10n" : `${key}=NODE`;
        this.cx.sink.error(def.from, def.to, `${kind} '${name}' has no ${key} pin`, `add ${example}`);
      }
    }
    return missing;
  }

  private device(s: SyntaxNode, loopVars: string[]): DeviceTpl {
    const kind = s.firstChild!.name === "pfet" ? "pfet" : "nfet";
    const def = s.getChild("Definition")!;
    const name = this.compiler.name(def, loopVars);
    const pins = new PinValues(this.compiler, this.pins(s, kind), loopVars);
    const missing = this.missingPins(def, kind, pins.written);
    const nodes = [
      pins.node("gate"),
      pins.node("source"),
      pins.node("drain"),
      pins.node(kind === "pfet" ? "well" : "bulk"),
    ];
    const length = (key: "w" | "l") =>
      pins.value(key, "length", `${key} is a length in metres and takes no unit symbol (write 2u for 2 µm)`);
    const w = length("w");
    const l = length("l");
    return {
      k: "device",
      type: kind === "pfet" ? PFET : NFET,
      at: s.from,
      name: name ?? fixedName(def.from, def.to, this.cx.src(def)),
      nodes,
      w,
      l,
      broken: missing || !name || pins.broken,
    };
  }

  private inject(s: SyntaxNode, loopVars: string[]): InjectTpl {
    const def = s.getChild("Definition")!;
    const name = this.compiler.name(def, loopVars);
    const pins = new PinValues(this.compiler, this.pins(s, "inject"), loopVars);
    const missing = this.missingPins(def, "inject", pins.written);
    const from = pins.node("from");
    const to = pins.node("to");
    const value = pins.value("value", AMPERE, "an inject value is a current in amperes");
    return {
      k: "inject",
      at: s.from,
      name: name ?? fixedName(def.from, def.to, this.cx.src(def)),
      from,
      to,
      value,
      broken: missing || !name || pins.broken,
    };
  }

  private rail(s: SyntaxNode, loopVars: string[]): RailTpl | null {
    const def = s.getChild("Definition")!;
    if (!def.getChild("InterpolatedName") && this.compiler.reservedRail(def, this.cx.src(def))) return null;
    const name = this.compiler.name(def, loopVars);
    const node = exprChild(s);
    const value = node ? this.compiler.value(node, loopVars, VOLT, "a rail value is a voltage in volts") : null;
    return name ? { k: "rail", at: s.from, end: s.to, name, value } : null;
  }

  private probe(s: SyntaxNode, loopVars: string[]): ProbeTpl | null {
    const { sink } = this.cx;
    const compiler = this.compiler;
    const name = compiler.name(s.getChild("Definition")!, loopVars);
    const node = exprChild(s);
    if (!name || !node) return null;
    const args: ReadTpl[] = [];
    const calls = new Map<CallExpr, string>();
    const e = compiler.build(node);
    if (isBad(e)) return null;
    const dim = inferDim(e, {
      name: (n) => compiler.nameDim(n, loopVars),
      probeCall: (c) => readCall(compiler, this.cx, c, loopVars, args, calls),
      interp: (i) => compiler.interpAsValue(i),
      report: (f, t, m, h) => sink.error(f, t, m, h),
    });
    if (!dim) return null;
    const fn = compiler.compile(e, (c) => calls.get(c)!);
    return { k: "probe", at: s.from, end: s.to, name, fn, loopNames: loopVars, args, dim };
  }
}

/** An element's written pins compiled one by one; `broken` once a written pin does not compile. */
class PinValues {
  broken = false;

  constructor(
    private readonly compiler: Compiler,
    readonly written: Map<string, SyntaxNode>,
    private readonly loopVars: string[],
  ) {}

  /** The node a pin names, or null when the pin is not written (or does not compile). */
  node(key: string): NameTpl | null {
    const v = this.written.get(key);
    if (!v) return null;
    const t = this.compiler.nodeRef(v, key, this.loopVars);
    if (!t) this.broken = true;
    return t;
  }

  /** The value of a pin, or null when the pin is not written (or does not compile). */
  value(key: string, expect: Dim | "length", what: string): ValueTpl | null {
    const v = this.written.get(key);
    if (!v) return null;
    const t = this.compiler.value(v, this.loopVars, expect, what);
    if (!t) this.broken = true;
    return t;
  }
}
