/**
 * Dimensions of expressions: the functions an expression may call with their
 * dimension rules, the built-in names, and `inferDim`, which checks an
 * expression's units and reports clashes where they are written.
 */
import { type CallExpr, constantValue, type Expr, type InterpExpr, type NameExpr, PROBE_FUNCTIONS } from "./expr";
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
