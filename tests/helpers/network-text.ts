/**
 * Networks for tests written statement by statement in code: each call adds
 * one line of `.runnel` text and `build()` elaborates it, so a test's network
 * is made by the language itself (the one producer of networks) and
 * `text` shows what was solved.
 *
 * A value is a number (written in full, round-trip precision) or an
 * expression of the language (a param's name, `"1e-12 * (a + b)"`). A sweep
 * is written as its list of values, computed as the language's own forms
 * compute them (`from + k·step`; `from·(to/from)^(k/(n−1))` for log).
 */
import { elaborate } from "../../src/lang/index";
import type { Network } from "../../src/lang/network";

export type Value = number | string;

export interface FetPins {
  gate: string;
  source: string;
  drain: string;
  w?: Value;
  l?: Value;
}

export type SweepSpec =
  number[] | { from: number; to: number; step: number } | { from: number; to: number; points: number; log?: boolean };

export interface SettingValues {
  kappa?: Value;
  temp?: number;
  i0?: Value;
  vt0?: Value | null;
  ispec?: Value | null;
  model?: "weak" | "ekv";
}

const text = (v: Value): string => (typeof v === "number" ? numberText(v) : v);

/** A number as the language reads it back exactly (shortest round-trip form; a negative one in parentheses). */
function numberText(v: number): string {
  if (!Number.isFinite(v)) throw new Error(`not a finite number: ${v}`);
  return v < 0 ? `(${String(v)})` : String(v);
}

export class NetworkText {
  private readonly lines: string[] = [];

  constructor(name: string | null = null) {
    if (name !== null) this.lines.push(`network ${name}`);
  }

  /** `set NAME = value` for each given setting (null leaves it unset). */
  set(values: SettingValues): this {
    for (const [key, v] of Object.entries(values)) {
      if (v === null || v === undefined) continue;
      this.lines.push(`set ${key} = ${typeof v === "number" ? numberText(v) : v}`);
    }
    return this;
  }

  param(name: string, value: Value): this {
    this.lines.push(`param ${name} = ${text(value)}`);
    return this;
  }

  rail(name: string, value: Value): this {
    this.lines.push(`rail ${name} = ${text(value)}`);
    return this;
  }

  nfet(name: string, pins: FetPins & { bulk?: string }): this {
    return this.fet("nfet", name, pins, pins.bulk === undefined ? "" : ` bulk=${pins.bulk}`);
  }

  pfet(name: string, pins: FetPins & { well: string }): this {
    return this.fet("pfet", name, pins, ` well=${pins.well}`);
  }

  inject(name: string, pins: { from: string; to: string; value: Value }): this {
    this.lines.push(`inject ${name} from=${pins.from} to=${pins.to} value=${text(pins.value)}`);
    return this;
  }

  probe(name: string, expression: string): this {
    this.lines.push(`probe ${name} = ${expression}`);
    return this;
  }

  sweep(param: string, spec: SweepSpec): this {
    let values: number[];
    if (Array.isArray(spec)) values = spec;
    else if ("step" in spec) {
      const count = Math.floor((spec.to - spec.from) / spec.step + 1e-9) + 1;
      values = Array.from({ length: count }, (_, k) => spec.from + k * spec.step);
    } else {
      const { from, to, points, log } = spec;
      values = Array.from({ length: points }, (_, k) => {
        const f = points === 1 ? 0 : k / (points - 1);
        return log ? from * Math.pow(to / from, f) : from + (to - from) * f;
      });
    }
    this.lines.push(`sweep ${param} values [${values.map(numberText).join(", ")}]`);
    return this;
  }

  /** `mismatch runs N seed S avt A` (A in V·µm). */
  mismatch(runs: number, seed: number, avt: number): this {
    this.lines.push(`mismatch runs ${runs} seed ${seed} avt ${numberText(avt)}`);
    return this;
  }

  get text(): string {
    return this.lines.join("\n") + "\n";
  }

  /** The elaborated network; throws with the diagnostics when the text has errors. */
  build(): Network {
    const r = elaborate(this.text);
    const errors = r.diagnostics.filter((d) => d.severity === "error");
    if (!r.network || errors.length > 0)
      throw new Error(`${errors.map((d) => `line ${d.line}: ${d.message}`).join("\n")}\n${this.text}`);
    return r.network;
  }

  private fet(kind: "nfet" | "pfet", name: string, pins: FetPins, bulk: string): this {
    const size = `${pins.w === undefined ? "" : ` w=${text(pins.w)}`}${pins.l === undefined ? "" : ` l=${text(pins.l)}`}`;
    this.lines.push(`${kind} ${name} gate=${pins.gate} source=${pins.source} drain=${pins.drain}${bulk}${size}`);
    return this;
  }
}
