/**
 * The text of a point in the `runnel solve` document, written straight from
 * the point's arrays: what `JSON.stringify(pointJson(net, p), null, 2)`
 * prints inside the document's `points` array (pretty), or on one line
 * (compact, NDJSON), without building the point's object (a name that needs
 * escaping is escaped once per run). A number that is not finite prints as null, as
 * JSON.stringify prints it. A selection prints only the nodes, rails and
 * devices it names (sections it leaves out are left out whole).
 */

import type { Network } from "../lang/network";
import type { PointResult } from "./results";

/** Which elements a point prints: indices into the network's tables, or null for every one. */
export interface Selection {
  nodes: Int32Array | null;
  rails: Int32Array | null;
  devices: Int32Array | null;
}

/** Every node, rail and device. */
export const EVERYTHING: Selection = { nodes: null, rails: null, devices: null };
/** Params, probes, solver figures and sample only. */
export const PROBES_ONLY: Selection = {
  nodes: new Int32Array(0),
  rails: new Int32Array(0),
  devices: new Int32Array(0),
};

const num = (v: number): string => (v === v && v !== Infinity && v !== -Infinity ? "" + v : "null");

/** Pieces a ByteWriter hands on are about this many bytes. */
const PIECE = 1 << 20;
const utf8 = new TextEncoder();

/**
 * Text written as UTF-8 bytes into one reused buffer, handed on in pieces of
 * about PIECE bytes (`flush` copies what it keeps): no string is built for
 * the text, so a big point leaves no garbage but its numbers' short strings.
 */
export class ByteWriter {
  private buf = new Uint8Array(PIECE + 4096);
  private pos = 0;

  constructor(private readonly out: (bytes: Uint8Array) => void) {}

  /** Text of ASCII characters only (numbers, punctuation, the document's own keys). */
  ascii(s: string): void {
    if (this.pos + s.length > PIECE) this.room(s.length);
    const b = this.buf;
    let p = this.pos;
    for (let i = 0; i < s.length; i++) b[p++] = s.charCodeAt(i);
    this.pos = p;
  }

  /** The content of a JSON string (without its quotes): plain ASCII as it is, anything else escaped and encoded. */
  name(s: string): void {
    if (this.pos + s.length > PIECE) this.room(s.length);
    const b = this.buf;
    let p = this.pos;
    for (let i = 0; i < s.length; i++) {
      const c = s.charCodeAt(i);
      if (c < 0x20 || c >= 0x7f || c === 0x22 || c === 0x5c) return this.text(JSON.stringify(s).slice(1, -1));
      b[p++] = c;
    }
    this.pos = p;
  }

  /** Any text, UTF-8 encoded. */
  text(s: string): void {
    if (this.pos + 3 * s.length > PIECE) this.room(3 * s.length);
    if (3 * s.length > this.buf.length - this.pos) {
      this.out(utf8.encode(s));
      return;
    }
    this.pos += utf8.encodeInto(s, this.buf.subarray(this.pos)).written;
  }

  /** Hands on what is written. */
  flush(): void {
    if (this.pos > 0) this.out(this.buf.subarray(0, this.pos));
    this.pos = 0;
  }

  private room(n: number): void {
    this.flush();
    if (n > this.buf.length) this.buf = new Uint8Array(n + 4096);
  }
}

/** One section of named values: its printed elements' indices, and their names by table index. */
interface Section {
  at: Int32Array;
  names: readonly string[];
}

export class PointFormatter {
  private readonly nodes: Section | null;
  private readonly rails: Section | null;
  private readonly devices: Section | null;
  private readonly railNode: Int32Array;
  /** Line breaks and indents by depth (pretty) or empty strings (compact). */
  private readonly nl: string[];
  private readonly colon: string;
  private readonly reasons = new Map<string, string>();
  private readonly expectations: readonly string[];

  constructor(net: Network, pretty: boolean, select: Selection = EVERYTHING) {
    this.expectations = net.expectations.map((x) => x.name);
    // Pretty: the point's braces at 4 spaces (inside the document's points array), its keys at 6.
    this.nl = [0, 1, 2, 3].map((d) => (pretty ? `\n${" ".repeat(4 + 2 * d)}` : ""));
    this.colon = pretty ? ": " : ":";
    const section = (names: () => readonly string[], pick: Int32Array | null, count: number): Section | null =>
      pick && pick.length === 0
        ? null
        : { at: pick ?? Int32Array.from({ length: count }, (_, k) => k), names: names() };
    this.nodes = section(() => net.nodes.names, select.nodes, net.nodes.names.length);
    this.rails = section(() => net.rails.map((r) => r.name), select.rails, net.rails.length);
    this.devices = section(() => net.devices.names, select.devices, net.devices.count);
    this.railNode = Int32Array.from(net.rails, (r) => r.node);
  }

  /** The point's text into `w` (a failed point's error only when given: the document leaves failed runs out). */
  format(p: PointResult, w: ByteWriter, error?: string): void {
    const { nl, colon } = this;
    w.ascii(`{${nl[1]}"params"${colon}`);
    this.record(p.params, w);
    if (this.nodes) this.values(w, "nodes", this.nodes, p.voltages, null);
    if (this.rails) this.values(w, "rails", this.rails, p.railCurrents, this.railNode);
    if (this.devices) this.deviceValues(w, p, this.devices);
    w.ascii(`,${nl[1]}"probes"${colon}`);
    this.record(p.probes, w);
    const { method, iterations, residual, reason } = p.solver;
    w.ascii(
      `,${nl[1]}"solver"${colon}{${nl[2]}"method"${colon}"${method}",${nl[2]}"iterations"${colon}${iterations},${nl[2]}"residual"${colon}${num(residual)},${nl[2]}"reason"${colon}`,
    );
    w.text(this.reason(reason));
    w.ascii(`${nl[1]}},${nl[1]}"sample"${colon}${p.sample ?? 0}`);
    if (this.expectations.length > 0) this.verdicts(p, w);
    if (error !== undefined) {
      w.ascii(`,${nl[1]}"error"${colon}`);
      w.text(JSON.stringify(error));
    }
    w.ascii(`${nl[0]}}`);
  }

  /** "expectations": { "name": true | false | null, … } (null: the point was not solved). */
  private verdicts(p: PointResult, w: ByteWriter): void {
    const { nl, colon } = this;
    w.ascii(`,${nl[1]}"expectations"${colon}`);
    this.expectations.forEach((name, i) => {
      w.ascii(`${i ? "," : "{"}${nl[2]}"`);
      w.name(name);
      w.ascii(`"${colon}${p.expectations ? (p.expectations.passed[i] === 1 ? "true" : "false") : "null"}`);
    });
    w.ascii(`${nl[1]}}`);
  }

  /** A small record of numbers (params, probes) as JSON.stringify prints it. */
  private record(r: Record<string, number>, w: ByteWriter): void {
    const { nl, colon } = this;
    let first = true;
    for (const k in r) {
      w.ascii(`${first ? "{" : ","}${nl[2]}"`);
      w.name(k);
      w.ascii(`"${colon}${num(r[k])}`);
      first = false;
    }
    w.ascii(first ? "{}" : `${nl[1]}}`);
  }

  private reason(r: string): string {
    let t = this.reasons.get(r);
    if (t === undefined) {
      t = JSON.stringify(r);
      this.reasons.set(r, t);
    }
    return t;
  }

  /** "key": { "name": value, … } with value v[at[k]], or v[map[at[k]]]. */
  private values(w: ByteWriter, key: string, sec: Section, v: Float64Array, map: Int32Array | null): void {
    const { nl, colon } = this;
    const { names, at } = sec;
    w.ascii(`,${nl[1]}"${key}"${colon}`);
    if (at.length === 0) return w.ascii("{}");
    const open = `{${nl[2]}"`;
    const next = `,${nl[2]}"`;
    const mid = `"${colon}`;
    for (let k = 0; k < at.length; k++) {
      const i = at[k];
      w.ascii(k ? next : open);
      w.name(names[i]);
      w.ascii(mid);
      w.ascii(num(v[map ? map[i] : i]));
    }
    w.ascii(`${nl[1]}}`);
  }

  private deviceValues(w: ByteWriter, p: PointResult, sec: Section): void {
    const { nl, colon } = this;
    const { names, at } = sec;
    w.ascii(`,${nl[1]}"devices"${colon}`);
    if (at.length === 0) return w.ascii("{}");
    const open = `{${nl[2]}"`;
    const next = `,${nl[2]}"`;
    const cur = `"${colon}{${nl[3]}"current"${colon}`;
    const ic = `,${nl[3]}"ic"${colon}`;
    const satTrue = `,${nl[3]}"saturated"${colon}true${nl[2]}}`;
    const satFalse = `,${nl[3]}"saturated"${colon}false${nl[2]}}`;
    const { currents, ic: icv, saturated } = p;
    for (let k = 0; k < at.length; k++) {
      const d = at[k];
      w.ascii(k ? next : open);
      w.name(names[d]);
      w.ascii(cur);
      w.ascii(num(currents[d]));
      w.ascii(ic);
      w.ascii(num(icv[d]));
      w.ascii(saturated[d] === 1 ? satTrue : satFalse);
    }
    w.ascii(`${nl[1]}}`);
  }
}

/** Indices of the names matching any of `patterns` (`*` matches any run of characters), in table order. */
export function matching(
  names: readonly string[],
  patterns: readonly string[],
): { at: Int32Array; unmatched: string[] } {
  const res = patterns.map((p) => new RegExp(`^${p.split("*").map(escapeRegExp).join(".*")}$`));
  const hit = new Uint8Array(patterns.length);
  const at: number[] = [];
  for (let k = 0; k < names.length; k++) {
    let any = false;
    for (let j = 0; j < res.length; j++)
      if (res[j].test(names[k])) {
        hit[j] = 1;
        any = true;
      }
    if (any) at.push(k);
  }
  return { at: Int32Array.from(at), unmatched: patterns.filter((_, j) => !hit[j]) };
}

const escapeRegExp = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
