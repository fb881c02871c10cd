import type { SyntaxNode } from "@lezer/common";
import { all, create, type EvalFunction, type MathNode } from "mathjs/number";
import * as T from "./parser.terms";
import {
  addDim,
  compatible,
  describeDim,
  DIMENSIONLESS,
  type Dim,
  hasUnit,
  LOOSE,
  mulDim,
  powDim,
  UNKNOWN,
  unitDim,
} from "./units";

/**
 * Expressions: the syntax tree's expression nodes become a small immutable IR
 * (built once per syntax node, never per loop iteration), which is checked for
 * names and dimensions and then compiled to a math.js evaluation function.
 */

const math = create(all);

interface Base {
  from: number;
  to: number;
}
export interface NumExpr extends Base {
  k: "num";
  value: number;
  unit: "" | "V" | "A" | "K";
}
export interface NameExpr extends Base {
  k: "name";
  name: string;
}
/** A name with `{expr}` pieces: literal strings alternate with integer expressions. */
export interface InterpExpr extends Base {
  k: "interp";
  parts: (string | Expr)[];
}
export interface UnaryExpr extends Base {
  k: "unary";
  op: "-" | "+";
  arg: Expr;
}
export type BinaryOp = "+" | "-" | "*" | "/" | "^";
export interface Operator {
  op: BinaryOp;
  from: number;
  to: number;
}
/**
 * A run of operators of one precedence: `args[0] ops[0] args[1] ops[1] … args[n]`
 * (two or more operands). `+ -` and `* /` fold from the left, `^` (alone in its
 * run) from the right. A long sum is one node, not a nesting.
 */
export interface BinaryExpr extends Base {
  k: "binary";
  args: Expr[];
  ops: Operator[];
}
export interface CallExpr extends Base {
  k: "call";
  fn: string;
  fnFrom: number;
  fnTo: number;
  args: Expr[];
}
/** A part with a syntax error or beyond the depth limit: already reported, never evaluated. */
export interface BadExpr extends Base {
  k: "bad";
}
export type CompareOp = "<" | "<=" | ">" | ">=" | "==" | "!=";
/** A comparison, possibly chained: `args[0] ops[0] args[1] ops[1] … args[n]` holds when every adjacent pair does. */
export interface CompareExpr extends Base {
  k: "compare";
  args: Expr[];
  ops: { op: CompareOp; from: number; to: number }[];
}
/** A run of `and` (or of `or`) over two or more conditions. */
export interface LogicExpr extends Base {
  k: "logic";
  op: "and" | "or";
  args: Expr[];
}
export interface NotExpr extends Base {
  k: "not";
  arg: Expr;
}
/** The condition kinds: only an expect statement takes them (conditions.ts). */
export type ConditionExpr = CompareExpr | LogicExpr | NotExpr;
export type Expr = NumExpr | NameExpr | InterpExpr | UnaryExpr | BinaryExpr | CallExpr | BadExpr | ConditionExpr;

/** True for a comparison, and, or, not. */
export function isCondition(e: Expr): e is ConditionExpr {
  return e.k === "compare" || e.k === "logic" || e.k === "not";
}

const PREFIX: Record<string, number> = { f: -15, p: -12, n: -9, u: -6, µ: -6, m: -3, k: 3, M: 6, G: 9 };
const NUMBER = /^((?:\d+(?:\.\d+)?|\.\d+))(?:[eE]([+-]?\d+))?([fpnuµmkMG])?([VAK])?$/;

/** Value and unit symbol of a number literal such as `450mV`, `1e-15`, `2u`; null if malformed. */
export function parseNumber(text: string): { value: number; unit: "" | "V" | "A" | "K" } | null {
  const m = NUMBER.exec(text);
  if (!m) return null;
  const exponent = (m[2] ? parseInt(m[2], 10) : 0) + (m[3] ? PREFIX[m[3]] : 0);
  // Decimal mantissa and one decimal exponent: correctly rounded, so 450m === 0.45.
  const value = Number(`${m[1]}e${exponent}`);
  return { value, unit: (m[4] ?? "") as "" | "V" | "A" | "K" };
}

function expressionChildren(node: SyntaxNode): SyntaxNode[] {
  const out: SyntaxNode[] = [];
  for (let c = node.firstChild; c; c = c.nextSibling) if (c.type.is("Expression") || c.type.isError) out.push(c);
  return out;
}

/** True if the subtree of `node` holds a syntax error node. */
export function containsError(node: SyntaxNode): boolean {
  const cur = node.cursor();
  let depth = 0;
  for (;;) {
    if (cur.type.isError) return true;
    if (cur.firstChild()) {
      depth++;
      continue;
    }
    for (;;) {
      if (depth === 0) return false;
      if (cur.nextSibling()) break;
      cur.parent();
      depth--;
    }
  }
}

export interface BuildContext {
  text: string;
  maxDepth: number;
  /** Called once for an expression nested deeper than `maxDepth`. */
  tooDeep(from: number, to: number): void;
}

/**
 * The IR of an expression node. Syntax errors inside become `bad` parts (the
 * syntax pass reports them); nesting beyond `maxDepth` becomes `bad` after one
 * call of `tooDeep`. Recursion depth is bounded by `maxDepth`.
 */
export function buildExpr(node: SyntaxNode, ctx: BuildContext, depth = 0): Expr {
  const { from, to } = node;
  if (node.type.isError) return { k: "bad", from, to };
  if (depth > ctx.maxDepth) {
    ctx.tooDeep(from, to);
    return { k: "bad", from, to };
  }
  switch (node.type.id) {
    case T.Number: {
      const n = parseNumber(ctx.text.slice(from, to));
      return n ? { k: "num", from, to, value: n.value, unit: n.unit } : { k: "bad", from, to };
    }
    case T.Identifier:
      return { k: "name", from, to, name: ctx.text.slice(from, to) };
    case T.ParenthesizedExpression: {
      const [inner] = expressionChildren(node);
      const close = node.lastChild;
      if (!inner || !close || close.name !== ")") return { k: "bad", from, to };
      return buildExpr(inner, ctx, depth + 1);
    }
    case T.UnaryExpression: {
      const op = node.getChild("ArithOp");
      const [arg] = expressionChildren(node);
      if (!op || !arg) return { k: "bad", from, to };
      const sign = ctx.text.slice(op.from, op.to) === "-" ? "-" : "+";
      return { k: "unary", from, to, op: sign, arg: buildExpr(arg, ctx, depth + 1) };
    }
    case T.CallExpression: {
      const fn = node.getChild("FunctionName");
      const list = node.getChild("ArgList");
      if (!fn || !list || list.lastChild?.name !== ")") return { k: "bad", from, to };
      const args = expressionChildren(list).map((a) => buildExpr(a, ctx, depth + 1));
      return { k: "call", from, to, fn: ctx.text.slice(fn.from, fn.to), fnFrom: fn.from, fnTo: fn.to, args };
    }
    case T.InterpolatedName:
      return buildInterp(node, ctx, depth);
    case T.CompareExpression:
      return buildCompare(node, ctx, depth);
    case T.AndExpression:
    case T.OrExpression: {
      const args = expressionChildren(node).map((a) => buildExpr(a, ctx, depth + 1));
      if (args.length < 2) return { k: "bad", from, to };
      return { k: "logic", from, to, op: node.type.id === T.AndExpression ? "and" : "or", args };
    }
    case T.NotExpression: {
      const [arg] = expressionChildren(node);
      return arg ? { k: "not", from, to, arg: buildExpr(arg, ctx, depth + 1) } : { k: "bad", from, to };
    }
    default:
      // The grammar makes one BinaryExpression node type per precedence level.
      return node.name === "BinaryExpression" ? buildBinary(node, ctx, depth) : { k: "bad", from, to };
  }
}

/** A run of one precedence, its operands and operators alternating (anything else: bad). */
function buildBinary(node: SyntaxNode, ctx: BuildContext, depth: number): Expr {
  const { from, to } = node;
  const args: Expr[] = [];
  const ops: Operator[] = [];
  for (let c = node.firstChild; c; c = c.nextSibling) {
    if (c.name === "ArithOp") {
      if (ops.length !== args.length - 1) return { k: "bad", from, to };
      ops.push({ op: ctx.text.slice(c.from, c.to) as BinaryOp, from: c.from, to: c.to });
    } else if (c.type.is("Expression") || c.type.isError) {
      if (args.length !== ops.length) return { k: "bad", from, to };
      args.push(buildExpr(c, ctx, depth + 1));
    }
  }
  if (args.length < 2 || args.length !== ops.length + 1) return { k: "bad", from, to };
  return { k: "binary", from, to, args, ops };
}

/** A chained comparison, its operands and operators alternating (anything else: bad). */
function buildCompare(node: SyntaxNode, ctx: BuildContext, depth: number): Expr {
  const { from, to } = node;
  const args: Expr[] = [];
  const ops: CompareExpr["ops"] = [];
  for (let c = node.firstChild; c; c = c.nextSibling) {
    if (c.name === "CompareOp") {
      if (ops.length !== args.length - 1) return { k: "bad", from, to };
      ops.push({ op: ctx.text.slice(c.from, c.to) as CompareOp, from: c.from, to: c.to });
    } else if (c.type.is("Expression") || c.type.isError) {
      if (args.length !== ops.length) return { k: "bad", from, to };
      args.push(buildExpr(c, ctx, depth + 1));
    }
  }
  if (args.length < 2 || args.length !== ops.length + 1) return { k: "bad", from, to };
  return { k: "compare", from, to, args, ops };
}

function buildInterp(node: SyntaxNode, ctx: BuildContext, depth: number): Expr {
  const { text } = ctx;
  const { from, to } = node;
  if (containsError(node)) return { k: "bad", from, to };
  const kids = expressionChildren(node);
  const parts: (string | Expr)[] = [];
  const open = text.indexOf("{", from);
  parts.push(text.slice(from, open));
  for (let i = 0; i < kids.length; i++) {
    parts.push(buildExpr(kids[i], ctx, depth + 1));
    // Between this piece and the next (or the end): "}" name characters, then "{" unless last.
    const close = text.indexOf("}", kids[i].to);
    const end = i + 1 < kids.length ? text.lastIndexOf("{", kids[i + 1].from) : to;
    const literal = text.slice(close + 1, end);
    if (literal) parts.push(literal);
  }
  return { k: "interp", from, to, parts };
}

/** Every sub-expression of `e` (pre-order), including `e`. */
export function* walk(e: Expr): Generator<Expr> {
  yield e;
  switch (e.k) {
    case "unary":
      yield* walk(e.arg);
      break;
    case "binary":
    case "compare":
    case "logic":
      for (const a of e.args) yield* walk(a);
      break;
    case "not":
      yield* walk(e.arg);
      break;
    case "call":
      for (const a of e.args) yield* walk(a);
      break;
    case "interp":
      for (const p of e.parts) if (typeof p !== "string") yield* walk(p);
      break;
  }
}

export function isBad(e: Expr): boolean {
  for (const x of walk(e)) if (x.k === "bad") return true;
  return false;
}

function applyOp(op: BinaryOp, a: number, b: number): number {
  switch (op) {
    case "+":
      return a + b;
    case "-":
      return a - b;
    case "*":
      return a * b;
    case "/":
      return a / b;
    case "^":
      return Math.pow(a, b);
  }
}

/** The value of a name-free arithmetic expression, NaN otherwise (used for constant exponents). */
export function constantValue(e: Expr): number {
  switch (e.k) {
    case "num":
      return e.value;
    case "unary":
      return e.op === "-" ? -constantValue(e.arg) : constantValue(e.arg);
    case "binary": {
      const n = e.args.length;
      if (e.ops[0].op === "^") {
        let r = constantValue(e.args[n - 1]);
        for (let i = n - 2; i >= 0; i--) r = Math.pow(constantValue(e.args[i]), r);
        return r;
      }
      let a = constantValue(e.args[0]);
      for (let i = 1; i < n; i++) a = applyOp(e.ops[i - 1].op, a, constantValue(e.args[i]));
      return a;
    }
    default:
      return NaN;
  }
}

type FnDim = (args: Dim[], call: CallExpr, report: DimReport) => Dim;
type DimReport = (from: number, to: number, message: string, hint?: string) => void;

function dimensionlessArg(name: string): FnDim {
  return (args, call, report) => {
    const a = args[0];
    if (hasUnit(a)) {
      const arg = call.args[0];
      report(
        arg.from,
        arg.to,
        `${name}() needs a dimensionless argument, but this is ${describeDim(a)}`,
        "divide a voltage by ut (or a current by a current) first, e.g. exp(v/ut)",
      );
      return UNKNOWN;
    }
    return a.kind === "unknown" ? UNKNOWN : LOOSE;
  };
}

function sameDims(name: string): FnDim {
  return (args, call, report) => {
    let d: Dim = args[0];
    for (let i = 1; i < args.length; i++) {
      if (!compatible(d, args[i])) {
        const arg = call.args[i];
        report(arg.from, arg.to, `${name}() mixes ${describeDim(d)} with ${describeDim(args[i])}`);
        return UNKNOWN;
      }
      d = addDim(d, args[i]);
    }
    return d;
  };
}

const passFirst: FnDim = (args) => args[0];

/** Arguments of one dimension (a row of outputs' currents), a result in taps (dimensionless). */
function logSlopeDim(name: string): FnDim {
  return (args, call, report) => (sameDims(name)(args, call, report).kind === "unknown" ? UNKNOWN : DIMENSIONLESS);
}

/** The math.js functions an expression may call, with their arity and dimension rule. */
export const FUNCTIONS: Record<string, { min: number; max: number; dim: FnDim }> = {
  exp: { min: 1, max: 1, dim: dimensionlessArg("exp") },
  log: { min: 1, max: 2, dim: dimensionlessArg("log") },
  log10: { min: 1, max: 1, dim: dimensionlessArg("log10") },
  log2: { min: 1, max: 1, dim: dimensionlessArg("log2") },
  sinh: { min: 1, max: 1, dim: dimensionlessArg("sinh") },
  cosh: { min: 1, max: 1, dim: dimensionlessArg("cosh") },
  tanh: { min: 1, max: 1, dim: dimensionlessArg("tanh") },
  asinh: { min: 1, max: 1, dim: dimensionlessArg("asinh") },
  acosh: { min: 1, max: 1, dim: dimensionlessArg("acosh") },
  atanh: { min: 1, max: 1, dim: dimensionlessArg("atanh") },
  sin: { min: 1, max: 1, dim: dimensionlessArg("sin") },
  cos: { min: 1, max: 1, dim: dimensionlessArg("cos") },
  tan: { min: 1, max: 1, dim: dimensionlessArg("tan") },
  asin: { min: 1, max: 1, dim: dimensionlessArg("asin") },
  acos: { min: 1, max: 1, dim: dimensionlessArg("acos") },
  atan: { min: 1, max: 1, dim: dimensionlessArg("atan") },
  atan2: { min: 2, max: 2, dim: (a, c, r) => (sameDims("atan2")(a, c, r).kind === "unknown" ? UNKNOWN : LOOSE) },
  sqrt: { min: 1, max: 1, dim: (a) => powDim(a[0], 0.5) },
  cbrt: { min: 1, max: 1, dim: (a) => powDim(a[0], 1 / 3) },
  abs: { min: 1, max: 1, dim: passFirst },
  sign: { min: 1, max: 1, dim: () => LOOSE },
  floor: { min: 1, max: 1, dim: passFirst },
  ceil: { min: 1, max: 1, dim: passFirst },
  round: { min: 1, max: 2, dim: passFirst },
  min: { min: 1, max: 64, dim: sameDims("min") },
  max: { min: 1, max: 64, dim: sameDims("max") },
  hypot: { min: 1, max: 64, dim: sameDims("hypot") },
  mod: { min: 2, max: 2, dim: sameDims("mod") },
  space_constant: { min: 2, max: 100000, dim: logSlopeDim("space_constant") },
  space_constant_error: { min: 3, max: 100000, dim: logSlopeDim("space_constant_error") },
  pow: {
    min: 2,
    max: 2,
    dim: (a, c, r) => {
      if (hasUnit(a[1])) {
        r(c.args[1].from, c.args[1].to, `an exponent must be dimensionless, but this is ${describeDim(a[1])}`);
        return UNKNOWN;
      }
      return powDim(a[0], constantValue(c.args[1]));
    },
  },
};

/** Built-in names usable in any expression, with their dimensions. */
export const BUILTINS: Record<string, Dim> = {
  ut: { kind: "known", v: 1, a: 0, k: 0 },
  kappa: DIMENSIONLESS,
  temp: { kind: "known", v: 0, a: 0, k: 1 },
  pi: LOOSE,
  e: LOOSE,
};

/** Functions that read a solved point: only probes and expectations may call them. */
export const PROBE_FUNCTIONS = new Set(["voltage", "current", "power"]);

export interface DimContext {
  /** Dimension of a plain name, or null after reporting it. */
  name(e: NameExpr): Dim | null;
  /** A probe call voltage(...)/current(...)/power(...): its dimension, or null after reporting it. */
  probeCall(e: CallExpr): Dim | null;
  /** An interpolated name used as a value (only valid as a probe argument). */
  interp(e: InterpExpr): void;
  report: DimReport;
}

/**
 * The dimension of `e`, reporting unknown names, bad calls and dimension
 * clashes through `ctx`. Returns null when something was reported (the
 * expression must then not be evaluated).
 */
export function inferDim(e: Expr, ctx: DimContext): Dim | null {
  switch (e.k) {
    case "bad":
      return null;
    case "num":
      return e.unit ? unitDim(e.unit) : LOOSE;
    case "name":
      return ctx.name(e);
    case "interp":
      ctx.interp(e);
      return null;
    case "compare":
    case "logic":
    case "not":
      ctx.report(
        e.from,
        e.to,
        `${e.k === "compare" ? "a comparison" : `'${e.k === "not" ? "not" : e.op}'`} makes a condition, not a value`,
        "conditions (comparisons, and, or, not) are written in expect NAME = CONDITION",
      );
      return null;
    case "unary":
      return inferDim(e.arg, ctx);
    case "binary": {
      // Every operand is checked (and reports its own errors) before the run is folded.
      const dims: Dim[] = [];
      let ok = true;
      for (const a of e.args) {
        const d = inferDim(a, ctx);
        if (d) dims.push(d);
        else ok = false;
      }
      if (!ok) return null;
      const n = dims.length;
      if (e.ops[0].op === "^") {
        // Right to left: x0 ^ (x1 ^ (… ^ xn)); each exponent must be dimensionless.
        let r = dims[n - 1];
        let value = constantValue(e.args[n - 1]);
        for (let i = n - 2; i >= 0; i--) {
          if (hasUnit(r)) {
            ctx.report(e.args[i + 1].from, e.to, `an exponent must be dimensionless, but this is ${describeDim(r)}`);
            return null;
          }
          r = powDim(dims[i], value);
          value = Math.pow(constantValue(e.args[i]), value);
        }
        return r;
      }
      let l = dims[0];
      for (let i = 1; i < n; i++) {
        const { op, from, to } = e.ops[i - 1];
        const r = dims[i];
        if (op === "*" || op === "/") {
          l = mulDim(l, r, op === "*" ? 1 : -1);
          continue;
        }
        if (!compatible(l, r)) {
          ctx.report(
            from,
            to,
            `cannot ${op === "+" ? "add" : "subtract"} ${describeDim(r)} ${op === "+" ? "to" : "from"} ${describeDim(l)}`,
            "both sides of + and - must have the same unit",
          );
          return null;
        }
        l = addDim(l, r);
      }
      return l;
    }
    case "call": {
      if (PROBE_FUNCTIONS.has(e.fn)) return ctx.probeCall(e);
      const f = FUNCTIONS[e.fn];
      if (!f) {
        ctx.report(
          e.fnFrom,
          e.fnTo,
          `unknown function '${e.fn}'`,
          `functions: ${Object.keys(FUNCTIONS).join(", ")}; in a probe or expect also voltage(), current() and power()`,
        );
        return null;
      }
      if (e.args.length < f.min || e.args.length > f.max) {
        const want = f.min === f.max ? `${f.min}` : f.max > 8 ? `at least ${f.min}` : `${f.min} or ${f.max}`;
        ctx.report(
          e.fnFrom,
          e.fnTo,
          `${e.fn}() takes ${want} argument${want === "1" ? "" : "s"}, not ${e.args.length}`,
        );
        return null;
      }
      const dims: Dim[] = [];
      let ok = true;
      for (const a of e.args) {
        const d = inferDim(a, ctx);
        if (!d) ok = false;
        else dims.push(d);
      }
      if (!ok) return null;
      return f.dim(dims, e, ctx.report);
    }
  }
}

/**
 * A canonical text of `e` (fully parenthesised): the compile-cache key.
 * Probe calls appear as their placeholder symbols.
 */
export function exprKey(e: Expr, placeholder?: (c: CallExpr) => string): string {
  switch (e.k) {
    case "num":
      return String(e.value);
    case "name":
      return e.name;
    case "unary":
      return `${e.op}(${exprKey(e.arg, placeholder)})`;
    case "binary": {
      let key = `(${exprKey(e.args[0], placeholder)})`;
      for (let i = 1; i < e.args.length; i++) key += `${e.ops[i - 1].op}(${exprKey(e.args[i], placeholder)})`;
      return key;
    }
    case "call":
      if (placeholder && PROBE_FUNCTIONS.has(e.fn)) return placeholder(e);
      return `${e.fn}(${e.args.map((a) => exprKey(a, placeholder)).join(",")})`;
    default:
      return "?";
  }
}

const OPERATOR: Record<BinaryOp, string> = { "+": "add", "-": "subtract", "*": "multiply", "/": "divide", "^": "pow" };

/** Runs up to this many operands compile to nested math.js operators, longer ones to folds. */
const NESTED_RUN = 8;
/** Operands per fold call; a longer run chains calls, each taking the previous one's result. */
const FOLD_CHUNK = 1024;

// The folds apply math.js's own add/subtract/multiply/divide/pow in source order, so a long
// run gives exactly what the nested operators give, without nesting math.js's compiled
// closures once per operand (a 100,000-term sum would overflow the stack).
math.import({
  space_constant(...xs: number[]): number {
    return logSlopeFit(xs).length;
  },
  space_constant_error(...xs: number[]): number {
    return logSlopeFit(xs).error;
  },
  __runnelFoldLeft(ops: string, ...xs: number[]): number {
    let a = xs[0];
    for (let i = 1; i < xs.length; i++) {
      const x = xs[i];
      switch (ops[i - 1]) {
        case "+":
          a = math.add(a, x);
          break;
        case "-":
          a = math.subtract(a, x);
          break;
        case "*":
          a = math.multiply(a, x);
          break;
        default:
          a = math.divide(a, x);
      }
    }
    return a;
  },
  __runnelFoldPow(...xs: number[]): number {
    let r = xs[xs.length - 1];
    for (let i = xs.length - 2; i >= 0; i--) r = math.pow(xs[i], r) as number;
    return r;
  },
});

function binaryNode(e: BinaryExpr, placeholder?: (c: CallExpr) => string): MathNode {
  const args = e.args.map((a) => toMathNode(a, placeholder));
  const n = args.length;
  if (e.ops[0].op === "^") {
    if (n <= NESTED_RUN) {
      let r = args[n - 1];
      for (let i = n - 2; i >= 0; i--) r = new math.OperatorNode("^", "pow", [args[i], r]);
      return r;
    }
    // From the right: the last chunk first, then each earlier chunk raised to it.
    let end = n;
    let r: MathNode | null = null;
    while (end > 0) {
      const start = Math.max(0, end - FOLD_CHUNK);
      const chunk = args.slice(start, end);
      if (r) chunk.push(r);
      r = chunk.length === 1 ? chunk[0] : new math.FunctionNode(new math.SymbolNode("__runnelFoldPow"), chunk);
      end = start;
    }
    return r!;
  }
  if (n <= NESTED_RUN) {
    let l = args[0];
    for (let i = 1; i < n; i++) {
      const op = e.ops[i - 1].op;
      l = new math.OperatorNode(op as "+", OPERATOR[op] as "add", [l, args[i]]);
    }
    return l;
  }
  let l = args[0];
  for (let start = 1; start < n; start += FOLD_CHUNK) {
    const end = Math.min(n, start + FOLD_CHUNK);
    const ops = e.ops
      .slice(start - 1, end - 1)
      .map((o) => o.op)
      .join("");
    l = new math.FunctionNode(new math.SymbolNode("__runnelFoldLeft"), [
      new math.ConstantNode(ops),
      l,
      ...args.slice(start, end),
    ]);
  }
  return l;
}

function toMathNode(e: Expr, placeholder?: (c: CallExpr) => string): MathNode {
  switch (e.k) {
    case "num":
      return new math.ConstantNode(e.value);
    case "name":
      return new math.SymbolNode(e.name);
    case "unary": {
      const arg = toMathNode(e.arg, placeholder);
      return e.op === "-" ? new math.OperatorNode("-", "unaryMinus", [arg]) : arg;
    }
    case "binary":
      return binaryNode(e, placeholder);
    case "call":
      if (placeholder && PROBE_FUNCTIONS.has(e.fn)) return new math.SymbolNode(placeholder(e));
      return new math.FunctionNode(
        new math.SymbolNode(e.fn),
        e.args.map((a) => toMathNode(a, placeholder)),
      );
    default:
      throw new Error("internal: a bad expression reached compilation");
  }
}

/** Compiles expressions to math.js evaluation functions, once per canonical text. */
export class ExprCompiler {
  private readonly cache = new Map<string, EvalFunction>();

  compile(e: Expr, placeholder?: (c: CallExpr) => string): EvalFunction {
    const key = exprKey(e, placeholder);
    let fn = this.cache.get(key);
    if (!fn) {
      fn = toMathNode(e, placeholder).compile();
      this.cache.set(key, fn);
    }
    return fn;
  }
}

/** A read-only scope for math.js: loop variables over a record of point values. */
export class LayeredScope {
  constructor(
    private readonly base: Readonly<Record<string, number>>,
    private readonly names: readonly string[],
    private readonly values: readonly number[],
  ) {}
  get(key: string): number | undefined {
    const i = this.names.indexOf(key);
    return i >= 0 ? this.values[i] : this.base[key];
  }
  has(key: string): boolean {
    return this.names.includes(key) || Object.prototype.hasOwnProperty.call(this.base, key);
  }
  set(): this {
    throw new Error("a Runnel scope is read-only");
  }
  keys(): IterableIterator<string> {
    return [...this.names, ...Object.keys(this.base)][Symbol.iterator]();
  }
}

/** Evaluates a compiled expression to a number; NaN when it throws or is not a real number. */
export function evaluateNumber(fn: EvalFunction, scope: unknown): number {
  try {
    const v: unknown = fn.evaluate(scope as Map<string, number>);
    return typeof v === "number" ? v : NaN;
  } catch {
    return NaN;
  }
}

/**
 * The decay length of values taken at equally spaced taps 0, 1, … n−1 (a row
 * of outputs' currents): a least-squares line through ln|x_k| against k has
 * slope s, and the length is 1/|s| taps (docs/physics.md §6 1-D diffuser chain:
 * e^(−θ) per tap is a length 1/θ). Its error is the slope's standard error
 * (residuals over n − 2 degrees of freedom) carried to 1/|s|: σ_s/s², 0 for
 * two values, which fit exactly (common practice for a straight-line fit).
 * A value that is zero or not finite makes both NaN.
 */
export function logSlopeFit(xs: readonly number[]): { length: number; error: number } {
  const n = xs.length;
  if (n < 2) return { length: NaN, error: NaN };
  const mk = (n - 1) / 2;
  let my = 0;
  const y = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const a = Math.abs(xs[k]);
    if (!(a > 0) || !Number.isFinite(a)) return { length: NaN, error: NaN };
    y[k] = Math.log(a);
    my += y[k];
  }
  my /= n;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < n; k++) {
    sxy += (k - mk) * (y[k] - my);
    sxx += (k - mk) * (k - mk);
  }
  const slope = sxy / sxx;
  if (slope === 0) return { length: Infinity, error: NaN };
  let ssr = 0;
  for (let k = 0; k < n; k++) {
    const r = y[k] - my - slope * (k - mk);
    ssr += r * r;
  }
  const seSlope = n > 2 ? Math.sqrt(ssr / (n - 2) / sxx) : 0;
  return { length: 1 / Math.abs(slope), error: seSlope / (slope * slope) };
}
