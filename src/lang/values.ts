/**
 * Values: the scope expressions are evaluated in (params, built-ins, loop variables), the settings, and compiled
 * value expressions (`ValueTpl`). A value that depends on a param or on temp (through ut) also becomes a `Binding`,
 * so a sweep point re-evaluates only what it changes.
 */
import type { EvalFunction } from "mathjs/number";
import { evaluateNumber, type Expr, LayeredScope, walk } from "./expr";
import type { Binding, BindingTarget, ParamDef, Settings, Span } from "./network";
import type { Dim } from "./units";
import { defaultSettings, type SettingName } from "./vocabulary";

/** A compiled value expression (one per syntax node, evaluated per loop iteration). */
export interface ValueTpl {
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

export interface ParamInfo {
  def: ParamDef;
  dim: Dim;
  deps: string[];
}

export class Values {
  /** The value of every name an expression may read now: params, built-ins, running loop variables. */
  readonly scope = new Map<string, number>();
  readonly settings: Settings = defaultSettings();
  /** Where each setting was set. */
  readonly settingAt = new Map<SettingName, Span>();
  /** What `set kappa` depends on (params), transitively. */
  kappaDeps: string[] = [];
  readonly params = new Map<string, ParamInfo>();
  /** The params in statement order. */
  readonly paramList: ParamDef[] = [];
  readonly bindings: Binding[] = [];
  /** The value of each running loop's variable, by loop slot (outermost first). */
  readonly loopValues: number[] = [];

  /** `swept`: the names some sweep statement varies (params, or temp). */
  constructor(private readonly swept: ReadonlySet<string>) {
    this.scope.set("temp", this.settings.temp);
    this.scope.set("ut", this.settings.ut);
    this.scope.set("kappa", this.settings.kappa);
    this.scope.set("pi", Math.PI);
    this.scope.set("e", Math.E);
  }

  /** A value template for expression `e` compiled to `fn`, in the scope of loop variables `loopVars`. */
  template(e: Expr, fn: EvalFunction, loopVars: string[], dim: Dim): ValueTpl {
    const { deps, loop } = this.pointDepsOf(e, loopVars);
    const hasNames = loop || deps !== null || [...walk(e)].some((x) => x.k === "name");
    return {
      from: e.from,
      to: e.to,
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
  }

  /** The value now (in the running loop iteration, at the default point). */
  valueOf(t: ValueTpl): number {
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
  bind(t: ValueTpl, target: BindingTarget): void {
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

  /** The transitive point dependencies of an expression's names (null if none), and whether it reads a loop variable. */
  pointDepsOf(e: Expr, loopVars: string[]): { deps: string[] | null; loop: boolean } {
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
  sweptDep(t: ValueTpl): string | null {
    if (!t.pointDeps) return null;
    for (const d of t.pointDeps) if (this.swept.has(d)) return d;
    return null;
  }
}
