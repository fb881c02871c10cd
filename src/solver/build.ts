/**
 * NetworkBuilder: makes elaborated `Network` objects in code, without text.
 * For property tests, benchmarks and programmatic use; the language's
 * `elaborate()` is the way from .runnel text.
 *
 * Contract
 * - The result satisfies every invariant of src/lang/network.ts: struct-of-arrays
 *   tables, rails with finite `railValue`, internal nodes NaN, SUBSTRATE (-1)
 *   for an nfet without bulk, values evaluated at the default point, and a
 *   `Binding` for every value that depends on a param or on temp/ut/kappa.
 * - A value is a number, the name of a param (`"vh"`), or `{ deps, expr }`
 *   with `expr(scope)` reading any of `deps` (params, "temp", "ut", "kappa").
 * - A pin is a node name (an unknown name becomes an internal node; a later
 *   `rail` with that name turns it into a rail) or a node index from `node()`.
 * - Statement errors (duplicate names, unknown params, non-finite values)
 *   throw at once, naming the statement.
 * - Tables grow by doubling; no object is made per device.
 */

import {
  type Binding,
  type BindingTarget,
  type Mismatch,
  type Model,
  type Network,
  NFET,
  type ParamDef,
  PFET,
  type Probe,
  type ProbeContext,
  type Settings,
  SUBSTRATE,
  type Sweep,
} from "../lang/network";
import { pointScope, thermalVoltage } from "../lang/point";

export type Value = number | string | { deps: string[]; expr: (scope: Readonly<Record<string, number>>) => number };
export type Pin = string | number;

export interface FetPins {
  gate: Pin;
  source: Pin;
  drain: Pin;
  w?: Value;
  l?: Value;
}

export interface NfetPins extends FetPins {
  bulk?: Pin;
}

export interface PfetPins extends FetPins {
  well: Pin;
}

export interface InjectPins {
  from: Pin;
  to: Pin;
  value: Value;
}

export type SweepSpec =
  number[] | { from: number; to: number; step: number } | { from: number; to: number; points: number; log?: boolean };

export type ProbeFn = (ctx: ProbeContext, params: Readonly<Record<string, number>>, settings: Settings) => number;

export interface SettingValues {
  kappa?: Value;
  temp?: number;
  i0?: Value;
  vt0?: Value | null;
  ispec?: Value | null;
  model?: Model;
}

const NO_SPAN = { from: 0, to: 0 };
const DEFAULT_SIZE = 1e-6;

class Column<T extends Int32Array | Float64Array | Uint8Array> {
  length = 0;
  constructor(public data: T) {}
  push(v: number): void {
    if (this.length === this.data.length) {
      const grown = new (this.data.constructor as { new (n: number): T })(this.data.length * 2);
      grown.set(this.data);
      this.data = grown;
    }
    this.data[this.length++] = v;
  }
  finish(): T {
    return this.data.slice(0, this.length) as T;
  }
}

interface PendingBinding {
  target: BindingTarget;
  value: Exclude<Value, number>;
}

export class NetworkBuilder {
  private name: string | null;
  private settings: Settings = {
    kappa: 0.7,
    temp: 300,
    ut: thermalVoltage(300),
    i0: 1e-15,
    vt0: null,
    ispec: null,
    model: "weak",
  };
  private settingBindings: PendingBinding[] = [];
  private params: ParamDef[] = [];
  private paramIndex = new Map<string, number>();
  private nodeNames: string[] = [];
  private nodeIndex = new Map<string, number>();
  private railValue = new Column(new Float64Array(64));
  private rails: { name: string; node: number }[] = [];
  private devNames: string[] = [];
  private devIndex = new Map<string, number>();
  private type = new Column(new Uint8Array(64));
  private gate = new Column(new Int32Array(64));
  private source = new Column(new Int32Array(64));
  private drain = new Column(new Int32Array(64));
  private bulk = new Column(new Int32Array(64));
  private w = new Column(new Float64Array(64));
  private l = new Column(new Float64Array(64));
  private devAt = new Column(new Int32Array(64));
  private injNames: string[] = [];
  private injIndex = new Map<string, number>();
  private injFrom = new Column(new Int32Array(16));
  private injTo = new Column(new Int32Array(16));
  private injValue = new Column(new Float64Array(16));
  private injAt = new Column(new Int32Array(16));
  private probes: Probe[] = [];
  private sweeps: Sweep[] = [];
  private mc: Mismatch | null = null;
  private pending: PendingBinding[] = [];
  private statement = 0;

  constructor(name: string | null = null) {
    this.name = name;
  }

  /** `set ...`: kappa, temp (kelvin; sets ut), i0, vt0, ispec, model. */
  set(values: SettingValues): this {
    this.statement++;
    for (const [key, v] of Object.entries(values)) {
      if (key === "model") {
        if (v !== "weak" && v !== "ekv") throw new Error(`set model: expected weak or ekv, got ${String(v)}`);
        this.settings.model = v;
      } else if (key === "temp") {
        if (typeof v !== "number" || !(v > 0)) throw new Error(`set temp: expected a positive temperature in kelvin`);
        this.settings.temp = v;
        this.settings.ut = thermalVoltage(v);
      } else if (key === "kappa" || key === "i0" || key === "vt0" || key === "ispec") {
        this.settingBindings = this.settingBindings.filter((b) => (b.target as { name: string }).name !== key);
        if (v === null) {
          if (key === "kappa" || key === "i0") throw new Error(`set ${key}: a value is required`);
          this.settings[key] = null;
        } else if (typeof v === "number") {
          this.settings[key] = this.finite(v, `set ${key}`);
        } else {
          this.settingBindings.push({ target: { kind: "setting", name: key }, value: v as Exclude<Value, number> });
        }
      } else {
        throw new Error(`set: unknown setting '${key}'`);
      }
    }
    return this;
  }

  /** `param NAME = value` (a constant; sweeps vary it). */
  param(name: string, value: number): this {
    this.statement++;
    if (this.paramIndex.has(name)) throw new Error(`param ${name}: already defined`);
    this.paramIndex.set(name, this.params.length);
    this.params.push({ name, value: this.finite(value, `param ${name}`), span: NO_SPAN });
    return this;
  }

  /** Index of node `name`, made internal if new. */
  node(name: string): number {
    const k = this.nodeIndex.get(name);
    if (k !== undefined) return k;
    const idx = this.nodeNames.length;
    this.nodeNames.push(name);
    this.nodeIndex.set(name, idx);
    this.railValue.push(NaN);
    return idx;
  }

  /** `rail NAME = value`: a node held at a fixed voltage. */
  rail(name: string, value: Value): this {
    this.statement++;
    const node = this.node(name);
    if (this.rails.some((r) => r.node === node)) throw new Error(`rail ${name}: already defined`);
    this.rails.push({ name, node });
    this.railValue.data[node] = this.valueNow(value, { kind: "rail", node }, `rail ${name}`);
    return this;
  }

  nfet(name: string, pins: NfetPins): this {
    return this.fet(NFET, name, pins, pins.bulk === undefined ? SUBSTRATE : this.pin(pins.bulk));
  }

  pfet(name: string, pins: PfetPins): this {
    if (pins.well === undefined) throw new Error(`pfet ${name}: well= is required`);
    return this.fet(PFET, name, pins, this.pin(pins.well));
  }

  /** `inject NAME from=A to=B value=I`: I amperes leave A and enter B. */
  inject(name: string, pins: InjectPins): this {
    this.statement++;
    if (this.injIndex.has(name) || this.devIndex.has(name)) throw new Error(`inject ${name}: name already used`);
    const index = this.injNames.length;
    this.injIndex.set(name, index);
    this.injNames.push(name);
    this.injFrom.push(this.pin(pins.from));
    this.injTo.push(this.pin(pins.to));
    this.injValue.push(this.valueNow(pins.value, { kind: "inject", index }, `inject ${name}`));
    this.injAt.push(this.statement);
    return this;
  }

  /** `probe NAME = ...` as a function of the solved point. */
  probe(name: string, evaluate: ProbeFn): this {
    this.statement++;
    if (this.probes.some((p) => p.name === name)) throw new Error(`probe ${name}: already defined`);
    this.probes.push({ name, span: NO_SPAN, evaluate });
    return this;
  }

  /** `sweep PARAM ...` (PARAM a param name or "temp"); several sweeps form a grid, the first outermost. */
  sweep(param: string, spec: SweepSpec): this {
    this.statement++;
    if (param !== "temp" && !this.paramIndex.has(param)) throw new Error(`sweep ${param}: no such param`);
    let values: number[];
    let log = false;
    if (Array.isArray(spec)) values = spec.slice();
    else if ("step" in spec) {
      if (!(spec.step !== 0) || Math.sign(spec.to - spec.from) * Math.sign(spec.step) < 0)
        throw new Error(`sweep ${param}: step does not reach 'to'`);
      const count = Math.floor((spec.to - spec.from) / spec.step + 1e-9) + 1;
      values = Array.from({ length: count }, (_, k) => spec.from + k * spec.step);
    } else {
      const { from, to, points } = spec;
      log = spec.log === true;
      if (!(points >= 1) || !Number.isInteger(points))
        throw new Error(`sweep ${param}: points must be a positive integer`);
      if (log && !(from > 0 && to > 0)) throw new Error(`sweep ${param}: a log sweep needs positive ends`);
      values = Array.from({ length: points }, (_, k) => {
        const f = points === 1 ? 0 : k / (points - 1);
        return log ? from * Math.pow(to / from, f) : from + (to - from) * f;
      });
    }
    for (const v of values) this.finite(v, `sweep ${param}`);
    this.sweeps.push({ param, values, log, span: NO_SPAN });
    return this;
  }

  /** `mismatch runs N seed S avt A` (A in V·µm). */
  mismatch(runs: number, seed: number, avt: number): this {
    this.statement++;
    if (!(runs >= 1) || !Number.isInteger(runs)) throw new Error(`mismatch: runs must be a positive integer`);
    if (!Number.isInteger(seed)) throw new Error(`mismatch: seed must be an integer`);
    if (!(avt >= 0)) throw new Error(`mismatch: avt must be non-negative`);
    this.mc = { runs, seed, avt, span: NO_SPAN };
    return this;
  }

  build(): Network {
    const paramsNow = this.params.map((p) => ({ ...p }));
    const nodeCount = this.nodeNames.length;
    const net: Network = {
      name: this.name,
      settings: { ...this.settings },
      params: paramsNow,
      nodes: {
        names: this.nodeNames.slice(),
        index: new Map(this.nodeIndex),
        railValue: this.railValue.finish().subarray(0, nodeCount),
      },
      rails: this.rails.map((r) => ({ name: r.name, node: r.node, span: NO_SPAN })),
      devices: {
        count: this.devNames.length,
        names: this.devNames.slice(),
        index: new Map(this.devIndex),
        type: this.type.finish(),
        gate: this.gate.finish(),
        source: this.source.finish(),
        drain: this.drain.finish(),
        bulk: this.bulk.finish(),
        w: this.w.finish(),
        l: this.l.finish(),
        at: this.devAt.finish(),
      },
      injects: {
        count: this.injNames.length,
        names: this.injNames.slice(),
        index: new Map(this.injIndex),
        from: this.injFrom.finish(),
        to: this.injTo.finish(),
        value: this.injValue.finish(),
        at: this.injAt.finish(),
      },
      probes: this.probes.slice(),
      sweeps: this.sweeps.map((s) => ({ ...s, values: s.values.slice() })),
      mismatch: this.mc ? { ...this.mc } : null,
      bindings: [],
    };
    const all = [...this.settingBindings, ...this.pending];
    net.bindings = all.map((p) => this.binding(p));
    // Evaluate every bound value at the default point (settings first: values may read kappa).
    const scope = pointScope(net);
    for (const b of net.bindings) {
      if (b.target.kind !== "setting") continue;
      const v = b.evaluate(scope);
      net.settings[b.target.name] = this.finite(v, `set ${b.target.name}`);
      if (b.target.name === "kappa") scope.kappa = v;
    }
    for (const b of net.bindings) {
      const t = b.target;
      const v = b.target.kind === "setting" ? 0 : this.finite(b.evaluate(scope), describe(t, net));
      if (t.kind === "rail") net.nodes.railValue[t.node] = v;
      else if (t.kind === "inject") net.injects.value[t.index] = v;
      else if (t.kind === "w") net.devices.w[t.index] = v;
      else if (t.kind === "l") net.devices.l[t.index] = v;
    }
    return net;
  }

  private fet(type: typeof NFET | typeof PFET, name: string, pins: FetPins, bulk: number): this {
    this.statement++;
    const kind = type === NFET ? "nfet" : "pfet";
    if (this.devIndex.has(name) || this.injIndex.has(name)) throw new Error(`${kind} ${name}: name already used`);
    const index = this.devNames.length;
    this.devIndex.set(name, index);
    this.devNames.push(name);
    this.type.push(type);
    this.gate.push(this.pin(pins.gate));
    this.source.push(this.pin(pins.source));
    this.drain.push(this.pin(pins.drain));
    this.bulk.push(bulk);
    const w = pins.w === undefined ? DEFAULT_SIZE : this.valueNow(pins.w, { kind: "w", index }, `${kind} ${name} w`);
    const l = pins.l === undefined ? DEFAULT_SIZE : this.valueNow(pins.l, { kind: "l", index }, `${kind} ${name} l`);
    if (!(w > 0) || !(l > 0)) throw new Error(`${kind} ${name}: w and l must be positive`);
    this.w.push(w);
    this.l.push(l);
    this.devAt.push(this.statement);
    return this;
  }

  private pin(p: Pin): number {
    if (typeof p === "number") {
      if (!Number.isInteger(p) || p < 0 || p >= this.nodeNames.length) throw new Error(`pin: no node with index ${p}`);
      return p;
    }
    return this.node(p);
  }

  /** The value now (NaN placeholder for a bound value, filled in by build()). */
  private valueNow(v: Value, target: BindingTarget, what: string): number {
    if (typeof v === "number") return this.finite(v, what);
    if (typeof v === "string" && !this.paramIndex.has(v) && v !== "temp" && v !== "ut" && v !== "kappa")
      throw new Error(`${what}: no param '${v}'`);
    this.pending.push({ target, value: v });
    return typeof v === "string" && this.paramIndex.has(v) ? this.params[this.paramIndex.get(v) as number].value : 1;
  }

  private binding(p: PendingBinding): Binding {
    const v = p.value;
    if (typeof v === "string") {
      const deps = v === "ut" ? ["ut", "temp"] : [v];
      return { target: p.target, dependsOn: deps, evaluate: (scope) => scope[v] };
    }
    const deps = new Set(v.deps);
    if (deps.has("ut")) deps.add("temp");
    if (deps.has("temp")) deps.add("ut");
    return { target: p.target, dependsOn: [...deps], evaluate: v.expr };
  }

  private finite(v: number, what: string): number {
    if (!Number.isFinite(v)) throw new Error(`${what}: value must be a finite number, got ${v}`);
    return v;
  }
}

function describe(t: BindingTarget, net: Network): string {
  switch (t.kind) {
    case "rail":
      return `rail ${net.nodes.names[t.node]}`;
    case "inject":
      return `inject ${net.injects.names[t.index]}`;
    case "w":
    case "l":
      return `${net.devices.names[t.index]} ${t.kind}`;
    case "setting":
      return `set ${t.name}`;
  }
}
