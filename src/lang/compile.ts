/**
 * Expressions and names compiled once per syntax node, before any loop runs: a value expression becomes a
 * `ValueTpl` whose dimension was checked against what its place needs, and a name such as `x{k+1}` becomes a
 * `NameTpl` whose `{…}` pieces are whole-number expressions. Every plain name an expression reads is checked for
 * what it is (a loop variable, a param defined above, a built-in); anything else is reported where it is written.
 */
import type { SyntaxNode } from "@lezer/common";
import type { EvalFunction } from "mathjs/number";
import type { Elaboration } from "./context";
import {
  buildExpr,
  type CallExpr,
  type Expr,
  ExprCompiler,
  type InterpExpr,
  isBad,
  type NameExpr,
  PROBE_FUNCTIONS,
} from "./expr";
import { BUILTINS, FUNCTIONS, inferDim } from "./dims";
import type { Shape } from "./names";
import * as T from "./parser.terms";
import { suggest } from "./suggest";
import { compatible, describeDim, DIMENSIONLESS, type Dim, hasUnit, LOOSE, sameDim, unitSymbol } from "./units";
import type { ValueTpl } from "./values";
import { isSetting } from "./vocabulary";

const RESERVED_HINT = "built-in names: ut, kappa, temp, pi, e";

/** A name, possibly with `{expr}` pieces. */
export interface NameTpl {
  from: number;
  to: number;
  fixed: string | null;
  /**
   * Literal strings alternate with pieces. A piece with `slot` >= 0 is the loop value in that slot plus `offset`
   * (the forms k, k+3, k-1), evaluated without math.js; with slot -1 it is `value` evaluated in scope.
   */
  parts: (string | NamePiece)[];
  /** Shared by every template with the same literal parts; null for a fixed name. */
  shape: Shape | null;
  /** The pieces of `parts` in order (empty for a fixed name). */
  pieces: NamePiece[];
  /** For a fixed name: its node once made or found (nodes are never removed), else -1. */
  fixedNode: number;
}

export interface NamePiece {
  value: ValueTpl;
  slot: number;
  offset: number;
}

export function fixedName(from: number, to: number, name: string): NameTpl {
  return { from, to, fixed: name, parts: [], shape: null, pieces: [], fixedNode: -1 };
}

/**
 * A name piece of the form `k`, `k + 3` or `k - 1` (k a loop variable, the constant a whole number below 2^31
 * without unit): its loop slot and offset, so it is evaluated without math.js. Slot -1 for any other piece.
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

/** The first expression child of a syntax node. */
export function exprChild(node: SyntaxNode): SyntaxNode | null {
  for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Expression")) return c;
  return null;
}

/** Every expression child of a syntax node. */
export function exprChildren(node: SyntaxNode): SyntaxNode[] {
  const out: SyntaxNode[] = [];
  for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Expression")) out.push(c);
  return out;
}

export class Compiler {
  private readonly exprs = new ExprCompiler();

  constructor(private readonly cx: Elaboration) {}

  /** The expression IR of a syntax node (reports nesting beyond the depth limit once). */
  build(node: SyntaxNode): Expr {
    let reported = false;
    const { sink, limits } = this.cx;
    return buildExpr(node, {
      text: this.cx.text,
      maxDepth: limits.maxExpressionDepth,
      tooDeep: (from, to) => {
        if (reported) return;
        reported = true;
        sink.error(
          from,
          to,
          `this expression nests deeper than ${limits.maxExpressionDepth} levels`,
          "split it with params",
        );
      },
    });
  }

  /** Compiles an expression to math.js; `placeholder` names the variable that stands for each probe call. */
  compile(e: Expr, placeholder?: (c: CallExpr) => string): EvalFunction {
    return this.exprs.compile(e, placeholder);
  }

  /**
   * A statement option's value that must be the same at every point: compiled as `value` does, then refused
   * (naming `key`) when it depends on a swept param. Returns the value, or null after reporting an error.
   */
  fixedValue(node: SyntaxNode, key: string, expect: Dim | null, what: string): { t: ValueTpl; v: number } | null {
    const t = this.value(node, [], expect, what);
    if (!t) return null;
    const sw = this.cx.values.sweptDep(t);
    if (sw) {
      this.cx.sink.error(t.from, t.to, `${key} cannot depend on '${sw}', which is swept`);
      return null;
    }
    return { t, v: this.cx.values.valueOf(t) };
  }

  /**
   * Compiles a value expression. `expect`: the dimension the context needs ("length": no unit symbol at all;
   * null: anything); `what` says what the value is. Returns null after reporting an error.
   */
  value(node: SyntaxNode, loopVars: string[], expect: Dim | "length" | null, what: string): ValueTpl | null {
    const { sink } = this.cx;
    const e = this.build(node);
    if (isBad(e)) return null;
    const dim = inferDim(e, {
      name: (n) => this.nameDim(n, loopVars),
      probeCall: (c) => {
        sink.error(
          c.fnFrom,
          c.fnTo,
          `${c.fn}() can only be used in a probe or an expect`,
          "probe NAME = EXPR and expect NAME = CONDITION read voltages, currents and power of the solved network",
        );
        return null;
      },
      interp: (i) => this.interpAsValue(i),
      report: (f, t, m, h) => sink.error(f, t, m, h),
    });
    if (!dim) return null;
    if (expect === "length") {
      if (hasUnit(dim)) {
        sink.error(e.from, e.to, `this is ${describeDim(dim)}, but ${what}`);
        return null;
      }
    } else if (expect && !compatible(expect, dim)) {
      const needs = sameDim(expect, DIMENSIONLESS) ? "a plain number" : describeDim(expect);
      sink.error(e.from, e.to, `expected ${needs} here, but this is ${describeDim(dim)}`, what);
      return null;
    }
    // A bare param used where a unit is needed (a rail's volts, an inject's amperes) is shown in that unit.
    if (expect && expect !== "length" && hasUnit(expect) && e.k === "name") {
      const p = this.cx.values.params.get(e.name);
      if (p && p.def.unit == null) p.def.unit = unitSymbol(expect);
    }
    return this.cx.values.template(e, this.compile(e), loopVars, dim);
  }

  /** Reports a name with {…} pieces where a value is expected. */
  interpAsValue(i: InterpExpr): void {
    this.cx.sink.error(
      i.from,
      i.to,
      "a name with {…} pieces can only be a node, device or probe name",
      "in a probe, use it inside voltage() or current()",
    );
  }

  /** The dimension of a plain name in an expression, or null after reporting it. */
  nameDim(n: NameExpr, loopVars: string[]): Dim | null {
    const { sink, values, declared, namespace, nodes, devices, injects } = this.cx;
    const name = n.name;
    if (loopVars.includes(name)) return LOOSE;
    const p = values.params.get(name);
    if (p) return p.dim;
    if (name in BUILTINS) {
      const setting = name === "ut" || name === "temp" ? "temp" : name === "kappa" ? "kappa" : null;
      const set = setting ? declared.settings.get(setting) : undefined;
      if (set && n.from < set.to) {
        sink.error(
          n.from,
          n.to,
          `${name} is used before 'set ${setting}' on line ${this.cx.line(set.from)}`,
          `move 'set ${setting}' above the first use of ${name}`,
        );
        return null;
      }
      return BUILTINS[name];
    }
    if (namespace.broken.has(name)) return null;
    const later = this.laterParam(name);
    if (later !== undefined) {
      sink.error(
        n.from,
        n.to,
        `param '${name}' is used before it is defined (line ${this.cx.line(later)})`,
        "move the param statement above this line",
      );
      return null;
    }
    if (isSetting(name)) {
      sink.error(
        n.from,
        n.to,
        `the setting '${name}' cannot be used in an expression`,
        "expressions may use params, loop variables, ut, kappa and temp",
      );
      return null;
    }
    const isDev = devices.names.has(name);
    const isInject = injects.index.has(name);
    if (nodes.names.find(name) !== undefined || isDev || isInject) {
      const what = isDev ? "a device" : isInject ? "an inject" : "a node";
      sink.error(
        n.from,
        n.to,
        `'${name}' is ${what}, not a value`,
        isDev || isInject ? `in a probe, use current(${name})` : `in a probe, use voltage(${name})`,
      );
      return null;
    }
    const candidates = [...loopVars, ...values.params.keys(), ...Object.keys(BUILTINS)];
    sink.error(
      n.from,
      n.to,
      `unknown name '${name}'`,
      suggest(name, candidates) ?? "declare it with param NAME = VALUE above this line",
    );
    return null;
  }

  /**
   * Offset of a param not defined yet whose statement is the name's first declaration (a rail declared above that
   * param keeps the name: the param is then the duplicate).
   */
  laterParam(name: string): number | undefined {
    const { values, declared } = this.cx;
    if (values.params.has(name)) return undefined;
    const at = declared.params.get(name);
    if (at === undefined) return undefined;
    const rail = declared.rails.get(name);
    return rail !== undefined && rail < at ? undefined : at;
  }

  /** A param or loop-variable name must not hide a built-in, a function or an object property. */
  checkValueName(name: string, from: number, to: number, what: string): boolean {
    const { sink } = this.cx;
    if (name in BUILTINS || isSetting(name)) {
      sink.error(from, to, `'${name}' is a built-in name and cannot be a ${what}`, RESERVED_HINT);
      return false;
    }
    if (name in FUNCTIONS || PROBE_FUNCTIONS.has(name)) {
      sink.error(from, to, `'${name}' is a function name and cannot be a ${what}`);
      return false;
    }
    if (name in Object.prototype || name.startsWith("__")) {
      sink.error(from, to, `'${name}' cannot be used as a ${what} name`);
      return false;
    }
    return true;
  }

  /** A rail may not take a built-in's name: reported once here, and pins naming it are then taken as this node. */
  reservedRail(def: SyntaxNode, name: string): boolean {
    if (!(name in BUILTINS)) return false;
    this.cx.sink.error(def.from, def.to, `'${name}' is a built-in name and cannot be a rail`, RESERVED_HINT);
    this.cx.namespace.reservedRails.add(name);
    return true;
  }

  /** A name (Definition, Identifier or InterpolatedName node) as a template. */
  name(node: SyntaxNode, loopVars: string[]): NameTpl | null {
    const inner =
      node.type.id === T.Definition
        ? (node.getChild("InterpolatedName") ?? null)
        : node.type.id === T.InterpolatedName
          ? node
          : null;
    if (!inner) return fixedName(node.from, node.to, this.cx.src(node));
    const e = this.build(inner);
    if (e.k !== "interp" || isBad(e)) return null;
    return this.nameOf(e, loopVars);
  }

  /** A name expression as a template: each `{…}` piece a whole number that no sweep may change. */
  nameOf(e: InterpExpr | NameExpr, loopVars: string[]): NameTpl | null {
    const { sink, values } = this.cx;
    if (e.k === "name") return fixedName(e.from, e.to, e.name);
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
          sink.error(c.fnFrom, c.fnTo, `${c.fn}() cannot be used inside a name`);
          return null;
        },
        interp: (i) => this.interpAsValue(i),
        report: (f, t, m, h) => sink.error(f, t, m, h),
      });
      if (!dim) {
        ok = false;
        continue;
      }
      if (hasUnit(dim)) {
        sink.error(p.from, p.to, `a name piece is a whole number, but this is ${describeDim(dim)}`);
        ok = false;
        continue;
      }
      const value = values.template(p, this.compile(p), loopVars, dim);
      const sw = values.sweptDep(value);
      if (sw) {
        sink.error(
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
    const shape = this.cx.shapes.of(lits);
    return { from: e.from, to: e.to, fixed: null, parts, shape, pieces, fixedNode: -1 };
  }

  /** A pin value that names a node (`key` is the pin). */
  nodeRef(node: SyntaxNode, key: string, loopVars: string[]): NameTpl | null {
    const { sink, values, namespace } = this.cx;
    if (node.type.id === T.Identifier) {
      const name = this.cx.src(node);
      let what: string | null = null;
      if (loopVars.includes(name)) what = "a loop variable";
      else if (values.params.has(name) || this.laterParam(name) !== undefined) what = "a param";
      else if (name in BUILTINS && !namespace.reservedRails.has(name)) what = "a built-in value";
      if (what) {
        sink.error(
          node.from,
          node.to,
          `${key}= names a node, but '${name}' is ${what}`,
          what === "a loop variable"
            ? `write a node name such as x{${name}}`
            : `to hold a node at a fixed voltage, declare it: rail ${name}_node = ${name}`,
        );
        return null;
      }
      return fixedName(node.from, node.to, name);
    }
    if (node.type.id === T.InterpolatedName) return this.name(node, loopVars);
    sink.error(
      node.from,
      node.to,
      `${key}= names a node, not a value`,
      "to hold a node at a fixed voltage, declare a rail: rail vg = 0.5 and write gate=vg",
    );
    return null;
  }
}
