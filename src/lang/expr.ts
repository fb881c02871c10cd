import type { SyntaxNode } from "@lezer/common";
import { all, create, type EvalFunction, type MathNode } from "mathjs/number";
import * as T from "./parser.terms";

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

/** Functions that read a solved point: only probes and expectations may call them. */
export const PROBE_FUNCTIONS = new Set(["voltage", "current", "power"]);

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
