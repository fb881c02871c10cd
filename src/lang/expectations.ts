/**
 * `expect NAME = CONDITION` and `expect NAME = CHECK devices=PATTERN [below=IC]`: what must hold at every point
 * and every mismatch sample. Expect statements stand at the top level and are elaborated once every other
 * statement has run, so a condition may read probes, devices and nodes declared anywhere in the file.
 *
 * A condition is comparisons (chained ones such as `1.9 <= r <= 2.1` hold when every adjacent pair does) joined
 * by `and`, `or` and `not`, over params, probes, built-ins and voltage(), current(), power() calls. Each
 * comparison's operands are compiled to math.js once; the logic stays a small tree (ConditionTree) the solver
 * walks per point to get both the verdict and the margin. A device-set check resolves its name pattern to the
 * devices it covers here, once.
 */
import type { SyntaxNode } from "@lezer/common";
import type { EvalFunction } from "mathjs/number";
import { type Compiler, exprChild } from "./compile";
import type { Elaboration } from "./context";
import { fmt } from "./diagnostics";
import { type CallExpr, type Expr, isBad, isCondition, type NameExpr } from "./expr";
import { BUILTINS, inferDim } from "./dims";
import type { Instantiator } from "./instantiate";
import type { CheckKind, CompareOp, ConditionTree, Span } from "./network";
import * as T from "./parser.terms";
import type { PendingRead, ReadTpl } from "./reads";
import { readCall } from "./reads";
import { suggest } from "./suggest";
import { addDim, compatible, describeDim, DIMENSIONLESS, type Dim, LOOSE, unitSymbol } from "./units";
import { CHECK_DETAIL, CHECKS, isSetting, WEAK_INVERSION_IC } from "./vocabulary";

/** An expectation elaborated, its reads not yet checked against the finished tables. */
export interface PendingExpectation {
  name: string;
  span: Span;
  line: number;
  unit: string | null;
  mixedUnits: boolean;
  condition: ConditionTree | null;
  /** The compiled operands of the condition's comparisons, in ConditionTree order. */
  operands: EvalFunction[];
  reads: PendingRead[];
  check: { kind: CheckKind; pattern: string; devices: Int32Array | null; below: number } | null;
}

/** A condition's margin dimension: one dimension, or "mixed" when its comparisons compare different units. */
type MarginDim = Dim | "mixed";

const EXAMPLE_CONDITION = "for example expect ratio_ok = 1.9 <= current(m1)/current(m2) <= 2.1";
const EXAMPLE_CHECK = "for example expect outputs_saturated = saturated devices=out*";
const CHECK_HINT = `checks: ${CHECKS.join(", ")}`;

/** A name pattern as a regular expression (`*`: any run of characters; names hold no other special character). */
export function patternRegex(pattern: string): RegExp {
  return new RegExp(`^${pattern.replace(/\*/g, ".*")}$`);
}

export class Expectations {
  private readonly statements: SyntaxNode[] = [];

  constructor(
    private readonly cx: Elaboration,
    private readonly compiler: Compiler,
    private readonly instantiator: Instantiator,
  ) {}

  /** Records an expect statement, elaborated by `finish` once every statement has run. */
  statement(s: SyntaxNode): void {
    this.statements.push(s);
  }

  /** Elaborates the recorded statements into cx.expectations. */
  finish(): void {
    const seen = new Map<string, number>();
    for (const s of this.statements) {
      const d = s.getChild("Definition")!;
      const name = this.cx.src(d);
      if (d.getChild("InterpolatedName")) {
        this.cx.sink.error(
          d.from,
          d.to,
          "an expectation name cannot have {…} pieces",
          "expect statements stand at the top level, outside for blocks",
        );
        continue;
      }
      const first = seen.get(name);
      if (first !== undefined) {
        this.cx.sink.error(
          d.from,
          d.to,
          `expectation '${name}' is defined twice (first on line ${this.cx.line(first)})`,
        );
        continue;
      }
      seen.set(name, s.from);
      const other = this.cx.namespace.other(name, "an expectation");
      if (other) {
        this.cx.namespace.clash("expectation", name, d, other);
        continue;
      }
      this.cx.namespace.declare(name, "an expectation", d.from);
      const span = { from: s.from, to: s.to };
      const check = s.getChild("DeviceCheck");
      const e = check ? this.deviceCheck(name, span, check) : this.condition(name, span, exprChild(s));
      if (e) this.cx.expectations.push(e);
    }
  }

  // ---------------------------------------------------------------- device-set checks

  private deviceCheck(name: string, span: Span, node: SyntaxNode): PendingExpectation | null {
    const { sink, values } = this.cx;
    const kindNode = node.getChild("CheckName")!;
    const kind = this.cx.src(kindNode);
    if (!(CHECKS as readonly string[]).includes(kind)) {
      sink.error(kindNode.from, kindNode.to, `unknown check '${kind}'`, suggest(kind, CHECKS) ?? CHECK_HINT);
      return null;
    }
    let pattern: { text: string; from: number; to: number } | null = null;
    let below = WEAK_INVERSION_IC;
    let ok = true;
    const given = new Set<string>();
    for (let o = node.getChild("CheckOption"); o; o = o.nextSibling) {
      if (o.type.id !== T.CheckOption) continue;
      const key = o.firstChild!;
      const k = this.cx.src(key);
      if (given.has(k)) {
        sink.error(key.from, key.to, `'${k}' is given twice`);
        ok = false;
        continue;
      }
      given.add(k);
      if (k === "devices") {
        const p = o.getChild("NamePattern");
        if (p) pattern = { text: this.cx.src(p), from: p.from, to: p.to };
        continue;
      }
      if (kind !== "weak") {
        sink.error(
          key.from,
          key.to,
          `'below' is an option of the weak check only`,
          `${kind}: ${CHECK_DETAIL[kind as CheckKind]}`,
        );
        ok = false;
        continue;
      }
      const v = exprChild(o);
      if (!v) continue;
      const fixed = this.compiler.fixedValue(
        v,
        "below",
        DIMENSIONLESS,
        "below is an inversion coefficient, a plain number",
      );
      if (!fixed) {
        ok = false;
        continue;
      }
      const { t, v: x } = fixed;
      if (!(x > 0 && Number.isFinite(x))) {
        sink.error(
          t.from,
          t.to,
          `below must be a positive inversion coefficient, not ${fmt(x)}`,
          `weak inversion is IC below ${WEAK_INVERSION_IC}`,
        );
        ok = false;
      } else below = x;
    }
    if (!pattern) {
      if (ok) sink.error(kindNode.from, kindNode.to, `${kind} needs devices=PATTERN`, EXAMPLE_CHECK);
      return null;
    }
    if (kind === "weak") {
      const missing = [
        values.settings.ispec === null ? "ispec" : null,
        values.settings.vt0 === null ? "vt0" : null,
      ].filter(Boolean);
      if (missing.length) {
        sink.error(
          kindNode.from,
          kindNode.to,
          `the weak check needs inversion coefficients: set ${missing.join(" and ")}`,
          "for example set vt0 = 450m and set ispec = 100n (your process's values)",
        );
        ok = false;
      }
    }
    const devices = this.matchDevices(pattern.text, pattern.from, pattern.to);
    if (devices === undefined || !ok) return null;
    return {
      name,
      span,
      line: this.cx.line(span.from),
      unit: kind === "weak" ? "" : "V",
      mixedUnits: false,
      condition: null,
      operands: [],
      reads: [],
      check: { kind: kind as CheckKind, pattern: pattern.text, devices, below },
    };
  }

  /** The devices a pattern names (null for `*`, every device), or undefined after reporting that none matches. */
  private matchDevices(pattern: string, from: number, to: number): Int32Array | null | undefined {
    const { devices, injects, sink, namespace } = this.cx;
    if (pattern === "*" && devices.length > 0) return null;
    const out: number[] = [];
    if (!pattern.includes("*")) {
      const i = devices.names.find(pattern);
      if (i !== undefined) out.push(i);
    } else if (devices.length > 0) {
      const re = patternRegex(pattern);
      const all = devices.names.names.all();
      for (let i = 0; i < all.length; i++) if (re.test(all[i])) out.push(i);
    }
    if (out.length > 0) return Int32Array.from(out);
    if (namespace.broken.has(pattern)) return undefined;
    const plain = pattern.replace(/\*/g, "");
    const hint = injects.index.has(pattern)
      ? `'${pattern}' is an inject: checks cover nfet and pfet devices`
      : devices.length === 0
        ? "the network has no devices"
        : (suggest(plain, devices.length < 5000 ? devices.names.names.all() : []) ??
          "* matches any run of characters: out* matches out0, out1, …");
    sink.error(from, to, `no device matches '${pattern}'`, hint);
    return undefined;
  }

  // ---------------------------------------------------------------- conditions

  private condition(name: string, span: Span, node: SyntaxNode | null): PendingExpectation | null {
    if (!node) return null;
    const e = this.compiler.build(node);
    if (isBad(e)) return null;
    if (e.k === "name" && (e.name === "not" || e.name === "and" || e.name === "or")) {
      this.cx.sink.error(
        e.from,
        e.to,
        `expected a condition ${e.name === "not" ? "after" : "around"} '${e.name}'`,
        EXAMPLE_CONDITION,
      );
      return null;
    }
    if (!isCondition(e)) {
      const checkWord = e.k === "name" && (CHECKS as readonly string[]).includes(e.name);
      this.cx.sink.error(
        e.from,
        e.to,
        checkWord
          ? `the ${e.name} check needs devices=PATTERN`
          : "an expectation is a condition: compare values with <, <=, >, >=, == or !=",
        checkWord ? `for example expect ${name} = ${e.name} devices=out*` : EXAMPLE_CONDITION,
      );
      return null;
    }
    const reads: ReadTpl[] = [];
    const calls = new Map<CallExpr, string>();
    const operands: Expr[] = [];
    const probeDims = new Map(this.cx.probes.map((p) => [p.name, p.dim]));
    const tree = this.tree(e, operands, reads, calls, probeDims);
    if (!tree) return null;
    const pendingReads = this.instantiator.reads(reads);
    if (!pendingReads) return null;
    const fns = operands.map((o) => this.compiler.compile(o, (c) => calls.get(c)!));
    const dim = this.marginDim(tree.dims);
    return {
      name,
      span,
      line: this.cx.line(span.from),
      unit: dim === "mixed" ? null : unitSymbol(dim),
      mixedUnits: dim === "mixed",
      condition: tree.tree,
      operands: fns,
      reads: pendingReads,
      check: null,
    };
  }

  /** One dimension for the margins of every comparison, or "mixed". */
  private marginDim(dims: Dim[]): MarginDim {
    let d: Dim = LOOSE;
    for (const x of dims) {
      if (!compatible(d, x)) return "mixed";
      d = addDim(d, x);
    }
    return d;
  }

  /** The condition tree of `e`, its operands appended to `operands`; null after reporting. */
  private tree(
    e: Expr,
    operands: Expr[],
    reads: ReadTpl[],
    calls: Map<CallExpr, string>,
    probeDims: Map<string, Dim>,
  ): { tree: ConditionTree; dims: Dim[] } | null {
    const { sink } = this.cx;
    switch (e.k) {
      case "logic": {
        const args: ConditionTree[] = [];
        const dims: Dim[] = [];
        let ok = true;
        for (const a of e.args) {
          if (!this.isConditionArg(a, `'${e.op}' joins conditions`)) {
            ok = false;
            continue;
          }
          const t = this.tree(a, operands, reads, calls, probeDims);
          if (!t) ok = false;
          else {
            args.push(t.tree);
            dims.push(...t.dims);
          }
        }
        return ok ? { tree: { k: e.op, args }, dims } : null;
      }
      case "not": {
        if (!this.isConditionArg(e.arg, "'not' negates a condition")) return null;
        const t = this.tree(e.arg, operands, reads, calls, probeDims);
        return t ? { tree: { k: "not", arg: t.tree }, dims: t.dims } : null;
      }
      case "compare": {
        const first = operands.length;
        const dims: (Dim | null)[] = e.args.map((a) =>
          isCondition(a) ? null : inferDim(a, this.dimContext(reads, calls, probeDims)),
        );
        let ok = true;
        e.args.forEach((a, i) => {
          if (isCondition(a)) {
            sink.error(
              a.from,
              a.to,
              "a comparison compares values, but this is a condition",
              "use and, or, not to join conditions",
            );
            ok = false;
          } else if (!dims[i]) ok = false;
        });
        if (!ok) return null;
        let d: Dim = LOOSE;
        for (let i = 0; i < e.args.length; i++) {
          const x = dims[i]!;
          if (!compatible(d, x)) {
            const op = e.ops[i - 1];
            sink.error(
              op.from,
              op.to,
              `'${op.op}' compares ${describeDim(d)} with ${describeDim(x)}`,
              "both sides of a comparison must have the same unit",
            );
            return null;
          }
          d = addDim(d, x);
        }
        operands.push(...e.args);
        return { tree: { k: "compare", first, ops: e.ops.map((o) => o.op as CompareOp) }, dims: [d] };
      }
      default:
        return null;
    }
  }

  /** Reports an operand of and/or/not that is a value; true when it is a condition. */
  private isConditionArg(a: Expr, what: string): boolean {
    if (isCondition(a) || a.k === "bad") return a.k !== "bad";
    this.cx.sink.error(a.from, a.to, `${what}, but this is a value`, "compare it: current(m1) > 1n");
    return false;
  }

  /** Names in a condition: probes by name (any order in the file), then params and built-ins. */
  private dimContext(reads: ReadTpl[], calls: Map<CallExpr, string>, probeDims: Map<string, Dim>) {
    const { compiler, cx } = this;
    return {
      name: (n: NameExpr): Dim | null => {
        const p = probeDims.get(n.name);
        if (p) return p;
        const name = n.name;
        const known =
          cx.values.params.has(name) ||
          cx.declared.params.has(name) ||
          name in BUILTINS ||
          isSetting(name) ||
          cx.namespace.broken.has(name) ||
          cx.nodes.names.find(name) !== undefined ||
          cx.devices.names.has(name) ||
          cx.injects.index.has(name);
        if (known) return compiler.nameDim(n, []);
        const check = (CHECKS as readonly string[]).includes(name);
        cx.sink.error(
          n.from,
          n.to,
          check ? `'${name}' is a device-set check, written on its own` : `unknown name '${name}'`,
          check
            ? `expect NAME = ${name} devices=PATTERN`
            : (suggest(name, [...probeDims.keys(), ...cx.values.params.keys(), ...Object.keys(BUILTINS)]) ??
                "an expectation reads params, probes, built-ins and voltage(), current(), power()"),
        );
        return null;
      },
      probeCall: (c: CallExpr) => readCall(compiler, cx, c, [], reads, calls),
      interp: (i: Parameters<Compiler["interpAsValue"]>[0]) => compiler.interpAsValue(i),
      report: (f: number, t: number, m: string, h?: string) => cx.sink.error(f, t, m, h),
    };
  }
}
