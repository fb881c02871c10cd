/**
 * The top-level statements that set a network's context rather than make its elements: `network`, `set`, `param`,
 * `sweep` and `mismatch`. They may only stand at the top level; each is elaborated where it stands, so a param is
 * known below its statement and a setting's value may use the params above it.
 */
import type { SyntaxNode } from "@lezer/common";
import { type Compiler, exprChild, exprChildren } from "./compile";
import type { Declarations, Elaboration } from "./context";
import { evaluateNumber } from "./expr";
import { fmt } from "./diagnostics";
import type { Model, ParamDef } from "./network";
import * as T from "./parser.terms";
import { thermalVoltage } from "./point";
import { suggest } from "./suggest";
import { compatible, describeDim, DIMENSIONLESS, type Dim, LOOSE, unitSymbol, VOLT } from "./units";
import type { ValueTpl } from "./values";
import { DEFAULT_SEED, isSetting, MODELS, SETTING_NAMES, SETTINGS } from "./vocabulary";

const SEEK_EXAMPLE = "seek vh from=600m to=900m measure=lambda target=8";

/** Reads ahead what the top level declares: params, plain rail names, settings, swept names. */
export function prescan(statements: SyntaxNode[], src: (n: SyntaxNode) => string, out: Declarations): void {
  for (const s of statements) {
    if (s.type.id === T.ParamStatement) {
      const d = s.getChild("Definition");
      if (d && !out.params.has(src(d))) out.params.set(src(d), d.from);
    } else if (s.type.id === T.RailStatement) {
      const d = s.getChild("Definition");
      if (d && !d.getChild("InterpolatedName") && !out.rails.has(src(d))) out.rails.set(src(d), d.from);
    } else if (s.type.id === T.SetStatement) {
      const n = s.getChild("SettingName");
      if (n && !out.settings.has(src(n))) out.settings.set(src(n), { from: s.from, to: s.to });
    } else if (s.type.id === T.SweepStatement) {
      const n = s.getChild("Identifier");
      if (n) out.swept.add(src(n));
    }
  }
}

/** Rounds away binary noise (0.30000000000000004) while keeping 12 significant digits. */
function tidy(v: number): number {
  return v === 0 ? 0 : Number(v.toPrecision(12));
}

export class Statements {
  constructor(
    private readonly cx: Elaboration,
    private readonly compiler: Compiler,
  ) {}

  /** `network NAME`: the first statement, at most once. */
  network(s: SyntaxNode, index: number): void {
    const { sink } = this.cx;
    const d = s.getChild("Definition")!;
    if (d.getChild("InterpolatedName")) {
      sink.error(d.from, d.to, "a network name cannot have {…} pieces");
      return;
    }
    if (this.cx.name !== null) {
      sink.error(s.from, s.to, "the network is already named", "one network statement per file");
      return;
    }
    if (index !== 0) {
      sink.error(
        s.firstChild!.from,
        s.firstChild!.to,
        "'network' must be the first statement",
        "move it to the top of the file",
      );
    }
    this.cx.name = this.cx.src(d);
  }

  /** `set NAME = VALUE`: each setting at most once, its value in range. */
  set(s: SyntaxNode): void {
    const { sink, values } = this.cx;
    const n = s.getChild("SettingName")!;
    const name = this.cx.src(n);
    const valueNode = exprChild(s);
    if (!isSetting(name)) {
      sink.error(
        n.from,
        n.to,
        `unknown setting '${name}'`,
        suggest(name, SETTING_NAMES) ?? `settings: ${SETTING_NAMES.join(", ")}`,
      );
      return;
    }
    const setting = name;
    const earlier = values.settingAt.get(setting);
    if (earlier) {
      sink.error(
        n.from,
        n.to,
        `${name} is set twice (first on line ${this.cx.line(earlier.from)})`,
        "keep one set statement per setting",
      );
      return;
    }
    values.settingAt.set(setting, { from: s.from, to: s.to });
    if (!valueNode) return;
    if (setting === "model") {
      const v = this.cx.src(valueNode);
      if (valueNode.type.id !== T.Identifier || !(MODELS as readonly string[]).includes(v)) {
        sink.error(valueNode.from, valueNode.to, `model is 'weak' or 'ekv', not '${v}'`, SETTINGS.model.what);
        return;
      }
      values.settings.model = v as Model;
      return;
    }
    const { dim, what } = SETTINGS[setting];
    const t = this.compiler.value(valueNode, [], dim, what);
    if (!t) return;
    const v = values.valueOf(t);
    const bad = (msg: string, hint?: string) => sink.error(t.from, t.to, msg, hint);
    switch (setting) {
      case "kappa":
        if (!(v > 0 && v <= 1))
          return bad(`kappa must lie between 0 and 1, but it is ${fmt(v)}`, "typical values are 0.6 to 0.8");
        values.settings.kappa = v;
        values.scope.set("kappa", v);
        values.kappaDeps = t.pointDeps ?? [];
        break;
      case "temp": {
        if (!(v > 0 && Number.isFinite(v)))
          return bad(
            `temp must be a positive temperature in kelvin, but it is ${fmt(v)}`,
            "for example set temp = 300K",
          );
        const s2 = values.sweptDep(t);
        if (s2)
          return bad(`temp cannot depend on '${s2}', which is swept`, "to vary the temperature, write sweep temp ...");
        if (v < 150)
          sink.warning(
            t.from,
            t.to,
            `temp is ${fmt(v)} K: temperatures are in kelvin`,
            "room temperature is about 300K",
          );
        values.settings.temp = v;
        values.settings.ut = thermalVoltage(v);
        values.scope.set("temp", v);
        values.scope.set("ut", values.settings.ut);
        return;
      }
      case "i0":
      case "ispec":
        if (!(v > 0 && Number.isFinite(v)))
          return bad(
            `${setting} must be a positive current, but it is ${fmt(v)}`,
            `for example set ${setting} = ${setting === "i0" ? "1f" : "100n"}`,
          );
        values.settings[setting] = v;
        break;
      case "vt0":
        if (!Number.isFinite(v)) return bad(`vt0 must be a finite voltage, but it is ${fmt(v)}`);
        values.settings.vt0 = v;
        break;
    }
    values.bind(t, { kind: "setting", name: setting });
  }

  /** `param NAME = EXPR`: a named value, known from here down. */
  param(s: SyntaxNode): void {
    const { sink, values, namespace, devices } = this.cx;
    const d = s.getChild("Definition")!;
    const name = this.cx.src(d);
    const valueNode = exprChild(s);
    if (d.getChild("InterpolatedName")) {
      sink.error(d.from, d.to, "a param name cannot have {…} pieces");
      return;
    }
    if (!this.compiler.checkValueName(name, d.from, d.to, "param")) return;
    const prev = values.params.get(name);
    if (prev) {
      sink.error(d.from, d.to, `param '${name}' is defined twice (first on line ${this.cx.line(prev.def.span.from)})`);
      return;
    }
    // One namespace: a name declared before as a rail, inject, probe or device keeps that
    // meaning (uses above resolve to it), and this later declaration is the error.
    const other = namespace.kindOf(name) ?? (devices.names.has(name) ? "a device" : undefined);
    if (other) {
      namespace.clash("param", name, d, other);
      return;
    }
    namespace.declare(name, "a param", d.from);
    if (!valueNode) return;
    const t = this.compiler.value(valueNode, [], null, "");
    if (!t) {
      namespace.broken.add(name);
      return;
    }
    const v = values.valueOf(t);
    if (!Number.isFinite(v)) {
      sink.error(
        t.from,
        t.to,
        `param '${name}' is ${fmt(v)}`,
        "check for a division by zero or the log or sqrt of a negative number",
      );
      namespace.broken.add(name);
      return;
    }
    const fn = t.fn;
    const def: ParamDef = { name, value: v, span: { from: d.from, to: d.to }, unit: unitSymbol(t.dim) };
    if (t.pointDeps && fn) {
      def.dependsOn = t.pointDeps;
      def.evaluate = (scope) => evaluateNumber(fn, scope);
    }
    values.params.set(name, { def, dim: t.dim, deps: t.pointDeps ?? [] });
    values.paramList.push(def);
    values.scope.set(name, v);
  }

  /** `sweep PARAM …`: its values, from a range with a step, a number of points, or a list. */
  sweep(s: SyntaxNode): void {
    const { sink, limits, values: scope } = this.cx;
    const n = s.getChild("Identifier")!;
    const param = this.cx.src(n);
    const span = { from: s.from, to: s.to };
    const range = s.getChild("SweepRange");
    const list = s.getChild("SweepList");
    const values: number[] = [];
    let log = false;
    let dim: Dim = LOOSE;
    let dimFrom = s.from;
    let dimTo = s.to;
    const compile = (node: SyntaxNode | null): ValueTpl | null => {
      if (!node) return null;
      const t = this.compiler.value(node, [], null, "");
      if (!t) return null;
      const sw = scope.sweptDep(t);
      if (sw) {
        sink.error(t.from, t.to, `sweep values cannot depend on '${sw}', which is swept`);
        return null;
      }
      if (!compatible(dim, t.dim)) {
        sink.error(
          t.from,
          t.to,
          `this value is ${describeDim(t.dim)}, but the other values of the sweep are ${describeDim(dim)}`,
        );
        return null;
      }
      if (t.dim.kind === "known" && dim.kind !== "known") {
        dim = t.dim;
        dimFrom = t.from;
        dimTo = t.to;
      }
      return t;
    };
    const finite = (t: ValueTpl): number | null => {
      const v = scope.valueOf(t);
      if (!Number.isFinite(v)) {
        sink.error(t.from, t.to, `a sweep value must be a finite number, but this is ${fmt(v)}`);
        return null;
      }
      return v;
    };
    const tooMany = (count: string | number, what: string) =>
      `this sweep has ${count} ${what}, more than the limit of ${limits.maxSweepValues}`;
    if (range) {
      const [aNode, bNode] = exprChildren(range);
      const ta = compile(aNode ?? null);
      const tb = compile(bNode ?? null);
      const stepNode = range.getChild("SweepStep");
      const pointsNode = range.getChild("SweepPoints");
      const tc = compile(stepNode ? exprChild(stepNode) : pointsNode ? exprChild(pointsNode) : null);
      if (!ta || !tb || !tc) return;
      const a = finite(ta);
      const b = finite(tb);
      const c = finite(tc);
      if (a === null || b === null || c === null) return;
      if (stepNode) {
        if (c === 0) return sink.error(tc.from, tc.to, "the step of a sweep cannot be 0");
        const count = (b - a) / c;
        if (count < -1e-9) {
          return sink.error(
            range.from,
            range.to,
            `reversed range: from ${fmt(a)} to ${fmt(b)} with step ${fmt(c)} never reaches ${fmt(b)}`,
            c > 0
              ? "swap from and to, or use a negative step to sweep downward"
              : "use a positive step to sweep upward",
          );
        }
        const nValues = Math.floor(count + 1e-9) + 1;
        if (!(nValues <= limits.maxSweepValues))
          return sink.error(tc.from, tc.to, tooMany(fmt(nValues), "values"), "use a larger step");
        for (let i = 0; i < nValues; i++) values.push(tidy(a + i * c));
      } else {
        log = pointsNode!.getChild("log") !== null;
        if (!Number.isInteger(c) || c < 1)
          return sink.error(tc.from, tc.to, `the number of points must be a whole number of at least 1, not ${fmt(c)}`);
        if (c > limits.maxSweepValues) return sink.error(tc.from, tc.to, tooMany(c, "points"));
        if (c > 1 && a === b)
          return sink.error(
            range.from,
            range.to,
            `empty range: from and to are both ${fmt(a)}`,
            "give two different bounds, or use points 1",
          );
        if (log && !(a > 0 && b > 0)) {
          return sink.error(
            range.from,
            range.to,
            `a log sweep needs positive bounds, not ${fmt(a)} and ${fmt(b)}`,
            "use linear spacing (drop 'log') for ranges through zero",
          );
        }
        for (let i = 0; i < c; i++) {
          const f = c === 1 ? 0 : i / (c - 1);
          values.push(i === 0 ? a : i === c - 1 ? b : tidy(log ? a * Math.pow(b / a, f) : a + (b - a) * f));
        }
      }
    } else if (list) {
      const items = exprChildren(list);
      if (items.length === 0) return sink.error(list.from, list.to, "empty list: a sweep needs at least one value");
      if (items.length > limits.maxSweepValues) return sink.error(list.from, list.to, tooMany(items.length, "values"));
      for (const item of items) {
        const t = compile(item);
        if (!t) return;
        const v = finite(t);
        if (v === null) return;
        values.push(v);
      }
    } else return;
    if (param === "temp") {
      for (const v of values)
        if (!(v > 0))
          return sink.error(
            span.from,
            span.to,
            `a temperature sweep needs positive kelvin values, but one is ${fmt(v)}`,
          );
      const cold = values.find((v) => v < 150);
      if (cold !== undefined)
        sink.warning(
          n.from,
          n.to,
          `temp reaches ${fmt(cold)} K: temperatures are in kelvin`,
          "room temperature is about 300K",
        );
    }
    this.cx.sweeps.push({ param, nameFrom: n.from, nameTo: n.to, values, log, span, dim, dimFrom, dimTo });
  }

  /** `seek PARAM from=A to=B measure=PROBE target=T`: the probe's name is checked with the other reads (checks.ts). */
  seek(s: SyntaxNode): void {
    const { sink, values } = this.cx;
    const kw = s.firstChild!;
    const id = s.getChild("Identifier");
    if (!id) return;
    const param = this.cx.src(id);
    const p = values.params.get(param);
    if (!p) {
      sink.error(
        id.from,
        id.to,
        `seek of unknown param '${param}'`,
        suggest(param, values.params.keys()) ?? "declare it with param NAME = VALUE",
      );
      return;
    }
    const seen = new Map<string, number>();
    let probe: { name: string; from: number; to: number } | null = null;
    let ok = true;
    for (let o = s.getChild("SeekOption"); o; o = o.nextSibling) {
      if (o.type.id !== T.SeekOption) continue;
      const key = o.firstChild!;
      const k = this.cx.src(key);
      if (seen.has(k) || (k === "measure" && probe)) {
        sink.error(key.from, key.to, `'${k}' is given twice`);
        ok = false;
        continue;
      }
      const node = exprChild(o);
      if (!node) {
        ok = false;
        continue;
      }
      if (k === "measure") {
        if (node.type.id !== T.Identifier) {
          sink.error(node.from, node.to, "measure= takes the name of a probe", SEEK_EXAMPLE);
          ok = false;
        } else probe = { name: this.cx.src(node), from: node.from, to: node.to };
        continue;
      }
      const dim = k === "target" ? null : p.dim;
      const what = k === "target" ? "the probe's target value" : `a bound of ${param}`;
      const fixed = this.compiler.fixedValue(node, k, dim, what);
      if (!fixed) {
        ok = false;
        continue;
      }
      seen.set(k, fixed.v);
    }
    for (const k of ["from", "to"] as const)
      if (ok && !seen.has(k)) {
        sink.error(kw.from, kw.to, `seek needs '${k}=', a bound of ${param}`, SEEK_EXAMPLE);
        ok = false;
      }
    if (ok && !probe) {
      sink.error(kw.from, kw.to, "seek needs 'measure=PROBE', the probe to bring to the target", SEEK_EXAMPLE);
      ok = false;
    }
    if (ok && !seen.has("target")) {
      sink.error(kw.from, kw.to, "seek needs 'target=T', the value the probe should reach", SEEK_EXAMPLE);
      ok = false;
    }
    if (!ok || !probe) return;
    const from = seen.get("from")!;
    const to = seen.get("to")!;
    if (!(from < to)) {
      sink.error(s.from, s.to, `seek's bracket is empty: from=${fmt(from)} must be below to=${fmt(to)}`);
      return;
    }
    this.cx.seeks.push({
      param,
      from,
      to,
      probe: probe.name,
      target: seen.get("target")!,
      span: { from: s.from, to: s.to },
      probeFrom: probe.from,
      probeTo: probe.to,
    });
  }

  /** `mismatch runs N [seed S] avt A`: at most once. */
  mismatch(s: SyntaxNode): void {
    const { sink, limits } = this.cx;
    const kw = s.firstChild!;
    if (this.cx.mismatch) {
      sink.error(kw.from, kw.to, `mismatch is given twice (first on line ${this.cx.line(this.cx.mismatch.span.from)})`);
      return;
    }
    const seen = new Map<string, number>();
    let ok = true;
    for (let o = s.getChild("MismatchOption"); o; o = o.nextSibling) {
      if (o.type.id !== T.MismatchOption) continue;
      const key = o.firstChild!;
      const k = this.cx.src(key);
      if (seen.has(k)) {
        sink.error(key.from, key.to, `'${k}' is given twice`);
        ok = false;
        continue;
      }
      const node = exprChild(o);
      if (!node) continue;
      const dim = k === "avt" ? VOLT : DIMENSIONLESS;
      const what =
        k === "avt" ? "avt is the Pelgrom coefficient in V·µm (write 3.5m for 3.5 mV·µm)" : `${k} is a plain number`;
      const fixed = this.compiler.fixedValue(node, k, dim, what);
      if (!fixed) {
        ok = false;
        continue;
      }
      const { t, v } = fixed;
      if (k === "runs" && !(Number.isInteger(v) && v >= 1 && v <= limits.maxPoints)) {
        sink.error(t.from, t.to, `runs must be a whole number from 1 to ${limits.maxPoints}, not ${fmt(v)}`);
        ok = false;
      } else if (k === "seed" && !(Number.isSafeInteger(v) && v >= 0)) {
        sink.error(t.from, t.to, `seed must be a whole number of at least 0, not ${fmt(v)}`);
        ok = false;
      } else if (k === "avt" && !(v >= 0 && Number.isFinite(v))) {
        sink.error(
          t.from,
          t.to,
          `avt must be a positive Pelgrom coefficient in V·µm, not ${fmt(v)}`,
          "for example avt 3.5m (3.5 mV·µm)",
        );
        ok = false;
      }
      seen.set(k, v);
    }
    const example = "mismatch runs 100 seed 1 avt 3.5m";
    if (!seen.has("runs") && ok) {
      sink.error(kw.from, kw.to, "mismatch needs 'runs N'", example);
      ok = false;
    }
    if (!seen.has("avt") && ok) {
      sink.error(kw.from, kw.to, "mismatch needs 'avt A', the Pelgrom coefficient in V·µm", example);
      ok = false;
    }
    if (!ok) return;
    this.cx.mismatch = {
      runs: seen.get("runs")!,
      seed: seen.get("seed") ?? DEFAULT_SEED,
      avt: seen.get("avt")!,
      span: { from: s.from, to: s.to },
    };
  }
}
