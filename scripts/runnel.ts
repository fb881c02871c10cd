/**
 * The `runnel` command line: `runnel check FILE [--json]`, `runnel solve FILE [output options]`
 * (docs/language.md, The runnel command; `npm run runnel` runs it from its bundle, scripts/runnel-bundle.mjs).
 * Exit status: 0 ok, 1 the network has errors, 2 usage error (including an unreadable file), 3 (with --strict)
 * the network is valid but an expectation fails.
 * File reading lives here only; src/lang has no I/O.
 */
import {
  closeSync,
  mkdtempSync,
  openSync,
  readFileSync,
  readSync,
  realpathSync,
  rmSync,
  statSync,
  writeSync,
} from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import {
  DEFAULT_LIMITS,
  diagnosticsDocument,
  elaborate,
  type ElaborationResult,
  formatDiagnostics,
  parseNumber,
  tooLargeResult,
} from "../src/lang/index";
import type { Network } from "../src/lang/network";
import { type ExpectationSummary, pointCount, type PointResult, solveNetwork } from "../src/solver/index";
import { CSV_TABLES, CsvRows, type CsvTable } from "../src/solver/csv";
import {
  ByteWriter,
  EVERYTHING,
  matching,
  PointFormatter,
  PROBES_ONLY,
  type Selection,
} from "../src/solver/json-format";
import { RunNotes, type SolveJson, toSolveJson } from "../src/solver/json";
import { seekJson, sensitivityJson } from "../src/solver/design-json";

const EXIT_OK = 0;
const EXIT_ERRORS = 1;
const EXIT_USAGE = 2;
const EXIT_EXPECTATIONS = 3;

export interface Io {
  /** A whole message (a line break is added when it has none). */
  out(text: string): void;
  err(text: string): void;
  /** Raw text, as it is (default: out). */
  write?(text: string): void;
  /** Raw UTF-8 bytes, consumed before the call returns (default: decoded, to write). */
  bytes?(b: Uint8Array): void;
}

/** The raw byte output of `io`. */
function bytesOut(io: Io): (b: Uint8Array) => void {
  if (io.bytes) return io.bytes;
  const write = io.write ?? io.out;
  const utf8 = new TextDecoder();
  return (b) => write(utf8.decode(b, { stream: true }));
}

/** A subcommand gets its arguments (after the subcommand word) and returns the exit status. */
type Subcommand = { usage: string; summary: string; run(args: string[], io: Io): number };

class UsageError extends Error {}

/** Splits `args` into one FILE and the flags in `allowed`. */
function fileAndFlags(args: string[], allowed: string[]): { file: string; flags: Set<string> } {
  const flags = new Set<string>();
  const files: string[] = [];
  for (const a of args) {
    if (a.startsWith("--")) {
      if (!allowed.includes(a)) throw new UsageError(`unknown option ${a}`);
      flags.add(a);
    } else files.push(a);
  }
  if (files.length !== 1) throw new UsageError(files.length === 0 ? "missing FILE" : "give exactly one FILE");
  return { file: files[0], flags };
}

/**
 * Elaborates a network file. An unreadable file is a usage error; a file far
 * beyond the language's size limit is refused without being read whole.
 */
export function elaborateFile(file: string): ElaborationResult {
  let size: number;
  try {
    const st = statSync(file);
    if (!st.isFile()) throw new UsageError(`${file}: not a file`);
    size = st.size;
  } catch (e) {
    if (e instanceof UsageError) throw e;
    throw new UsageError(`${file}: cannot read the file (${(e as NodeJS.ErrnoException).code ?? "error"})`);
  }
  // A file far beyond the language's limit is not read whole: elaboration reports the limit.
  if (size > DEFAULT_LIMITS.maxSourceLength * 4) return tooLargeResult(size, "bytes");
  let text: string;
  try {
    text = readFileSync(file, "utf8");
  } catch (e) {
    throw new UsageError(`${file}: cannot read the file (${(e as NodeJS.ErrnoException).code ?? "error"})`);
  }
  return elaborate(text);
}

const check: Subcommand = {
  usage: "runnel check FILE [--json]",
  summary: "print the diagnostics of a network file",
  run(args, io) {
    const { file, flags } = fileAndFlags(args, ["--json"]);
    const result = elaborateFile(file);
    if (flags.has("--json")) io.out(JSON.stringify(diagnosticsDocument(result), null, 2));
    else if (result.diagnostics.length) io.out(formatDiagnostics(file, result.diagnostics));
    return result.ok ? EXIT_OK : EXIT_ERRORS;
  },
};

/**
 * Most values the `--json` document may print (points × values per point),
 * checked before anything is solved: its head (ok, diagnostics) is known only
 * when the run ends, so its points wait on disk until then (--ndjson and
 * --csv print each point as it is solved, with no limit). About 40 bytes
 * each (measured: 16.5 M values printed 628 MB).
 */
export const MAX_PRINTED_VALUES = 10_000_000;

/** What `runnel solve` prints, from its options. */
interface Output {
  format: "summary" | "json" | "ndjson" | "csv";
  table: CsvTable;
  select: Selection;
}

/** Values a point prints with this selection: its nodes, rails, three per device, probes, params and the solver's. */
function printedValues(net: Network, select: Selection): number {
  const n = (pick: Int32Array | null, all: number) => (pick ? pick.length : all);
  return (
    pointCount(net) *
    (n(select.nodes, net.nodes.names.length) +
      n(select.rails, net.rails.length) +
      3 * n(select.devices, net.devices.count) +
      net.probes.length +
      net.params.length +
      8)
  );
}

/**
 * The selection options: `--probes-only`, or `--nodes`, `--rails`,
 * `--devices` with comma-separated names (`*` matches any run of
 * characters). Once one of them is given, a section it does not name is left out.
 */
function selection(net: Network, opts: Map<string, string>): Selection {
  if (opts.has("--probes-only")) {
    if (["--nodes", "--rails", "--devices"].some((o) => opts.has(o)))
      throw new UsageError("--probes-only leaves out every node, rail and device: give it alone");
    return PROBES_ONLY;
  }
  if (!["--nodes", "--rails", "--devices"].some((o) => opts.has(o))) return EVERYTHING;
  const pick = (option: string, what: string, names: readonly string[]): Int32Array => {
    const list = opts.get(option);
    if (list === undefined) return new Int32Array(0);
    const patterns = list.split(",").map((x) => x.trim());
    if (patterns.some((x) => x === "")) throw new UsageError(`${option}: an empty name in '${list}'`);
    const { at, unmatched } = matching(names, patterns);
    if (unmatched.length)
      throw new UsageError(`${option}: no ${what} matches ${unmatched.map((x) => `'${x}'`).join(", ")}`);
    return at;
  };
  return {
    nodes: pick("--nodes", "node", net.nodes.names),
    rails: pick(
      "--rails",
      "rail",
      net.rails.map((r) => r.name),
    ),
    devices: pick("--devices", "device", net.devices.names),
  };
}

/** Parses `runnel solve`'s arguments: one FILE, flags, and options that take a value. */
function solveArgs(args: string[]): { file: string; opts: Map<string, string> } {
  const { file, opts } = fileAndOptions(
    args,
    ["--json", "--ndjson", "--probes-only", "--strict"],
    ["--csv", "--nodes", "--rails", "--devices"],
  );
  const formats = ["--json", "--ndjson", "--csv"].filter((f) => opts.has(f));
  if (formats.length > 1) throw new UsageError(`give one of ${formats.join(", ")}`);
  const table = opts.get("--csv");
  if (table !== undefined && !(CSV_TABLES as readonly string[]).includes(table))
    throw new UsageError(`--csv: a table is one of ${CSV_TABLES.join(", ")}, not '${table}'`);
  return { file, opts };
}

/** After the first 2 s of a run, a line on stderr every 2 s: how far it is and how long the rest will take at this pace. */
function progress(io: Io): (done: number, total: number) => void {
  const t0 = performance.now();
  let next = t0 + 2000;
  return (done, total) => {
    const now = performance.now();
    if (now < next || done >= total) return;
    next = now + 2000;
    const s = (now - t0) / 1000;
    io.err(
      `runnel solve: ${done.toLocaleString("en-US")} of ${total.toLocaleString("en-US")} points in ${s.toFixed(0)} s, about ${((s / done) * (total - done)).toFixed(0)} s to go`,
    );
  };
}

/** A margin for the plain-text output: 3 significant digits and its unit. */
function formatMargin(v: number, unit: string | null): string {
  const a = Math.abs(v);
  const text = a === 0 || (a >= 1e-3 && a < 1e4) ? String(Number(v.toPrecision(3))) : v.toExponential(2);
  return unit ? `${text} ${unit}` : text;
}

/** One line per expectation for the summary output. */
function expectationLines(summaries: readonly ExpectationSummary[]): string[] {
  return summaries.map((x) => {
    const margin = x.margin === null ? "" : `, margin ${formatMargin(x.margin, x.unit)}`;
    const y = x.yield;
    const yieldText = y
      ? `, yield ${y.passed}/${y.samples} (95 % interval ${(y.low * 100).toFixed(1)}–${(y.high * 100).toFixed(1)} %)`
      : "";
    if (x.passed) return `  expect ${x.name} (line ${x.line}): holds at all ${x.points} points${margin}${yieldText}`;
    const f = x.firstFailure;
    const params = f ? Object.entries(f.params).map(([k, v]) => `${k} = ${v}`) : [];
    const at = f
      ? `, first at point ${f.point}${params.length ? ` (${params.join(", ")})` : ""}${f.sample !== null ? `, sample ${f.sample}` : ""}`
      : "";
    return `  expect ${x.name} (line ${x.line}): FAILS at ${x.points - x.pointsPassed} of ${x.points} points${at}${margin}${yieldText}`;
  });
}

/** Prints the diagnostics of a document as `FILE:LINE:COLUMN: severity: message` lines (to stderr with `err`). */
function printDiagnostics(file: string, doc: SolveJson, print: (t: string) => void): void {
  if (doc.diagnostics.length)
    print(
      formatDiagnostics(
        file,
        doc.diagnostics.map((d) => ({ ...d, from: 0, to: 0 })),
      ),
    );
}

const solve: Subcommand = {
  usage:
    "runnel solve FILE [--json | --ndjson | --csv probes|nodes|devices|rails] [--probes-only | --nodes LIST --rails LIST --devices LIST] [--strict]",
  summary:
    "solve every point; print a summary, the JSON document, one JSON line per point, or a CSV table (--strict: exit 3 when an expectation fails)",
  run(args, io) {
    const { file, opts } = solveArgs(args);
    const result = elaborateFile(file);
    const net = result.network;
    // The text places solver diagnostics at their device's line (the file was readable a moment ago).
    const text = net ? readFileSync(file, "utf8") : undefined;
    const format: Output["format"] = opts.has("--json")
      ? "json"
      : opts.has("--ndjson")
        ? "ndjson"
        : opts.has("--csv")
          ? "csv"
          : "summary";
    const out: Output = {
      format,
      table: (opts.get("--csv") ?? "probes") as CsvTable,
      select: net ? selection(net, opts) : EVERYTHING,
    };
    const printed = net ? printedValues(net, out.select) : 0;
    if (net && format === "json" && printed > MAX_PRINTED_VALUES) {
      const at = net.sweeps[0]?.span.from ?? 0;
      const line = (text ?? "").slice(0, at).split("\n").length;
      const message = `this run would print about ${printed.toExponential(1)} values (${pointCount(net).toLocaleString("en-US")} points of ${net.nodes.names.length.toLocaleString("en-US")} nodes and ${net.devices.count.toLocaleString("en-US")} device${net.devices.count === 1 ? "" : "s"}), more than the command line's ${MAX_PRINTED_VALUES.toLocaleString("en-US")}: use fewer points, print less (--probes-only, --nodes, --devices), stream it (--ndjson, --csv), or run it in the workbench, which stores results point by point`;
      const doc = toSolveJson(
        null,
        [...result.diagnostics, { severity: "error", line, column: 1, from: at, to: at, message }],
        null,
        undefined,
        net.name,
      );
      io.out(JSON.stringify(doc, null, 2));
      return EXIT_ERRORS;
    }
    if (!net) {
      const doc = toSolveJson(null, result.diagnostics, null, text, result.name, false);
      if (format === "json") io.out(JSON.stringify(doc, null, 2));
      else if (format === "ndjson") io.out(JSON.stringify(doc));
      else printDiagnostics(file, doc, format === "csv" ? io.err : io.out);
      return EXIT_ERRORS;
    }
    const notes = new RunNotes(net);
    const sink = format === "summary" ? null : pointSink(net, out, io);
    const run = solveNetwork(net, {
      keepPoints: false,
      reuseArrays: true,
      onProgress: progress(io),
      onPoint: (p) => {
        notes.note(p);
        sink?.point(p);
      },
    });
    const doc = toSolveJson(net, result.diagnostics, run, text, result.name, false, notes);
    if (sink) sink.end(doc, file);
    else {
      printDiagnostics(file, doc, io.out);
      io.out(
        `${file}: ${run.solved} point${run.solved === 1 ? "" : "s"}, ${run.method} (${run.reason})${doc.ok ? "" : ", with errors"}`,
      );
      if (doc.ok && notes.expectations) io.out(expectationLines(notes.expectations.finish()).join("\n"));
    }
    if (!doc.ok) return EXIT_ERRORS;
    return opts.has("--strict") && doc.expectations?.some((x) => !x.passed) ? EXIT_EXPECTATIONS : EXIT_OK;
  },
};

/** Where solved points go: formatted as they come, and finished when the run ends. */
interface PointSink {
  point(p: PointResult): void;
  end(doc: SolveJson, file: string): void;
}

function pointSink(net: Network, out: Output, io: Io): PointSink {
  const emit = bytesOut(io);
  if (out.format === "csv") {
    // The rows of one table (the columns of the workbench's CSV export), a point at a time; diagnostics to stderr.
    const w = new ByteWriter(emit);
    const csv = new CsvRows(net, out.table, out.select);
    const put = (t: string) => w.text(t);
    put(csv.header());
    return {
      point: (p) => csv.rows(p, put),
      end: (doc, file) => {
        w.flush();
        printDiagnostics(file, doc, io.err);
      },
    };
  }
  if (out.format === "ndjson") {
    // One line per point as it is solved (a failed point carries its error); last, the document without points.
    const f = new PointFormatter(net, false, out.select);
    const w = new ByteWriter(emit);
    return {
      point: (p) => {
        f.format(p, w, p.ok ? undefined : (p.error ?? "not solved"));
        w.ascii("\n");
      },
      end: (doc) => {
        const { points: _, ...head } = doc;
        w.text(`${JSON.stringify(head)}\n`);
        w.flush();
      },
    };
  }
  // The document: its points wait (in memory, then on disk) until the head, known at the end, is printed.
  const f = new PointFormatter(net, true, out.select);
  const held = new HeldBytes();
  const w = new ByteWriter(held.put);
  let first = true;
  return {
    point: (p) => {
      w.ascii(first ? "    " : ",\n    ");
      first = false;
      f.format(p, w);
      w.flush(); // a point at a time (a big one in pieces)
    },
    end: (doc) => {
      w.flush();
      if (!doc.ok || first) {
        held.discard();
        io.out(JSON.stringify(doc, null, 2));
        return;
      }
      // The expectations (known at the end) follow the points.
      const { expectations, ...rest } = doc;
      const head = JSON.stringify({ ...rest, points: [] }, null, 2);
      // head ends with `"points": []` and the closing brace: open the array there instead.
      const tail = new ByteWriter(emit);
      tail.text(`${head.slice(0, head.lastIndexOf("[]"))}[\n`);
      tail.flush();
      held.replay(emit);
      tail.ascii("\n  ]");
      if (expectations)
        tail.text(`,\n  "expectations": ${JSON.stringify(expectations, null, 2).replace(/\n/g, "\n  ")}`);
      tail.ascii("\n}\n");
      tail.flush();
    },
  };
}

/** Held bytes beyond this many move to a temporary file. */
const HOLD_IN_MEMORY = 1 << 25;

/**
 * Bytes held until the run ends: in memory while they are few, then in a
 * temporary file, so memory stays bounded whatever the number of points.
 */
export class HeldBytes {
  private parts: Uint8Array[] = [];
  private size = 0;
  private fd = -1;
  private path = "";

  constructor(private readonly limit = HOLD_IN_MEMORY) {}

  /** Whether the bytes went to a temporary file. */
  get spilled(): boolean {
    return this.fd >= 0;
  }

  put = (b: Uint8Array): void => {
    if (this.fd < 0 && this.size + b.length <= this.limit) {
      this.parts.push(b.slice());
      this.size += b.length;
      return;
    }
    if (this.fd < 0) {
      const dir = mkdtempSync(path.join(tmpdir(), "runnel-solve-"));
      this.path = path.join(dir, "points.json");
      this.fd = openSync(this.path, "w+");
      for (const p of this.parts) writeAll(this.fd, p);
      this.parts = [];
      this.size = 0;
    }
    writeAll(this.fd, b);
  };

  /** Hands every held byte to `out` in order, then lets them go. */
  replay(out: (b: Uint8Array) => void): void {
    if (this.fd >= 0) {
      const buf = new Uint8Array(1 << 20);
      for (let at = 0; ;) {
        const n = readSync(this.fd, buf, 0, buf.length, at);
        if (n <= 0) break;
        out(buf.subarray(0, n));
        at += n;
      }
    }
    for (const p of this.parts) out(p);
    this.discard();
  }

  discard(): void {
    this.parts = [];
    this.size = 0;
    if (this.fd >= 0) {
      closeSync(this.fd);
      rmSync(path.dirname(this.path), { recursive: true, force: true });
      this.fd = -1;
    }
  }
}

/** Writes all of b to fd; a pipe whose reader is behind (EAGAIN) is waited for, a millisecond at a time. */
function writeAll(fd: number, b: Uint8Array): void {
  for (let at = 0; at < b.length;) {
    try {
      at += writeSync(fd, b, at);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== "EAGAIN") throw e;
      Atomics.wait(PAUSE, 0, 0, 1);
    }
  }
}
const PAUSE = new Int32Array(new SharedArrayBuffer(4));

/** Options `--name value` or `--name=value` in `valued`, flags in `flags`, and one FILE. */
function fileAndOptions(
  args: string[],
  flags: string[],
  valued: string[],
): { file: string; opts: Map<string, string> } {
  const opts = new Map<string, string>();
  const files: string[] = [];
  for (let k = 0; k < args.length; k++) {
    const a = args[k];
    const eq = a.indexOf("=");
    const name = a.startsWith("--") && eq > 0 ? a.slice(0, eq) : a;
    if (flags.includes(name)) opts.set(name, "");
    else if (valued.includes(name)) {
      const v = eq > 0 ? a.slice(eq + 1) : args[++k];
      if (v === undefined || v.startsWith("--")) throw new UsageError(`${name} needs a value`);
      opts.set(name, v);
    } else if (a.startsWith("--")) throw new UsageError(`unknown option ${a}`);
    else files.push(a);
  }
  if (files.length !== 1) throw new UsageError(files.length === 0 ? "missing FILE" : "give exactly one FILE");
  return { file: files[0], opts };
}

/** A number option: the language's number form (units and prefixes allowed), or a usage error naming it. */
function numberOption(opts: Map<string, string>, name: string): number | undefined {
  const t = opts.get(name);
  if (t === undefined) return undefined;
  const neg = t.startsWith("-");
  const v = parseNumber(neg ? t.slice(1) : t);
  if (v === null || !Number.isFinite(v.value)) throw new UsageError(`${name}: '${t}' is not a number`);
  return neg ? -v.value : v.value;
}

/** The network of FILE, or its diagnostics printed and null. */
function networkOrDiagnostics(file: string, json: boolean, io: Io): Network | null {
  const result = elaborateFile(file);
  if (result.network && result.ok) return result.network;
  if (json) io.out(JSON.stringify(diagnosticsDocument(result), null, 2));
  else io.out(formatDiagnostics(file, result.diagnostics));
  return null;
}

const sensitivity: Subcommand = {
  usage: "runnel sensitivity FILE [--json] [--probes LIST] [--avt A] [--groups PATTERNS] [--top N]",
  summary:
    "derivatives of each probe w.r.t. every device's W/L and threshold (adjoint) and params, at the file's own point; with avt (or the file's mismatch) the first-order mismatch budget",
  run(args, io) {
    const { file, opts } = fileAndOptions(args, ["--json"], ["--probes", "--avt", "--groups", "--top"]);
    const json = opts.has("--json");
    const net = networkOrDiagnostics(file, json, io);
    if (!net) return EXIT_ERRORS;
    const list = (name: string) =>
      opts.has(name)
        ? (opts.get(name) as string)
            .split(",")
            .map((s) => s.trim())
            .filter(Boolean)
        : undefined;
    const probes = list("--probes");
    for (const p of probes ?? [])
      if (!net.probes.some((q) => q.name === p)) throw new UsageError(`--probes: no probe named ${p}`);
    const top = numberOption(opts, "--top");
    if (top !== undefined && !(Number.isInteger(top) && top > 0)) throw new UsageError("--top: a whole number above 0");
    const doc = sensitivityJson(net, { avt: numberOption(opts, "--avt"), groups: list("--groups"), top, probes });
    if (json) io.out(JSON.stringify(doc, null, 2));
    else if (!doc.ok) io.out(`${file}: ${doc.error}`);
    else
      for (const p of doc.probes) {
        io.out(`probe ${p.probe} = ${p.value}`);
        for (const d of p.devices.slice(0, 10))
          io.out(
            `  ${d.device.padEnd(12)} dQ/dVT ${d.vt_per_mv.toExponential(3)} per mV, dlnQ/dln(W/L) ${d.size?.toFixed(4) ?? "-"}`,
          );
        for (const [k, v] of Object.entries(p.params))
          io.out(`  param ${k}: dQ/d${k} ${v === null ? "-" : v.toExponential(3)}`);
        if (p.budget) {
          const mc = p.budget.monte_carlo;
          const beside = mc
            ? `; Monte Carlo ${mc.sigma.toExponential(3)} ± ${mc.standard_error.toExponential(1)} over ${mc.samples} samples`
            : "";
          io.out(
            `  mismatch (first order, avt ${p.budget.avt} V·µm): sigma ${p.budget.sigma.toExponential(3)}${beside}`,
          );
          for (const d of p.budget.devices.slice(0, 10))
            io.out(`    ${d.name.padEnd(12)} ${(d.share * 100).toFixed(1)} %`);
          for (const g of p.budget.groups)
            io.out(`    ${g.pattern.padEnd(12)} ${(g.share * 100).toFixed(1)} % (${g.devices} devices)`);
        }
      }
    return doc.ok ? EXIT_OK : EXIT_ERRORS;
  },
};

const seek: Subcommand = {
  usage: "runnel seek FILE [--param P --low A --high B --probe Q --target T] [--json]",
  summary:
    "the file's seek statements (or the one given by options): the value of param P in [A, B] giving probe Q = T (Brent's method), one search per point of the file's other sweeps",
  run(args, io) {
    const named = ["--param", "--low", "--high", "--probe", "--target"];
    const { file, opts } = fileAndOptions(args, ["--json"], named);
    const given = named.filter((o) => opts.has(o));
    if (given.length > 0 && given.length < named.length)
      throw new UsageError(`missing ${named.filter((o) => !opts.has(o)).join(", ")}`);
    const json = opts.has("--json");
    const net = networkOrDiagnostics(file, json, io);
    if (!net) return EXIT_ERRORS;
    const specs =
      given.length > 0
        ? [
            {
              param: opts.get("--param") as string,
              probe: opts.get("--probe") as string,
              low: numberOption(opts, "--low") as number,
              high: numberOption(opts, "--high") as number,
              target: numberOption(opts, "--target") as number,
            },
          ]
        : net.seeks.map((s) => ({ param: s.param, probe: s.probe, low: s.from, high: s.to, target: s.target }));
    if (specs.length === 0)
      throw new UsageError("the file has no seek statement: give --param, --low, --high, --probe and --target");
    const docs = specs.map((spec) => seekJson(net, spec));
    const ok = docs.every((d) => d.ok);
    if (json) io.out(JSON.stringify(given.length > 0 ? docs[0] : { network: net.name, ok, seeks: docs }, null, 2));
    else
      for (const doc of docs)
        for (const p of doc.points) {
          const at = Object.entries(p.at).map(([k, v]) => `${k} = ${v}`);
          const where = at.length ? ` at ${at.join(", ")}` : "";
          io.out(
            p.ok
              ? `${doc.param} = ${p.value}${where}: ${doc.probe} = ${p.achieved} (${p.iterations} solves)`
              : `no ${doc.param}${where}: ${p.message}`,
          );
        }
    return ok ? EXIT_OK : EXIT_ERRORS;
  },
};

/** The subcommands; adding one is one entry here. */
const SUBCOMMANDS: Record<string, Subcommand> = { check, solve, sensitivity, seek };

function usage(): string {
  const lines = Object.values(SUBCOMMANDS).map((c) => `  ${c.usage.padEnd(28)} ${c.summary}`);
  return `usage:\n${lines.join("\n")}`;
}

export function main(argv: string[], io: Io): number {
  const [name, ...rest] = argv;
  if (!name || name === "--help" || name === "-h") {
    io.err(usage());
    return EXIT_USAGE;
  }
  const cmd = Object.prototype.hasOwnProperty.call(SUBCOMMANDS, name) ? SUBCOMMANDS[name] : undefined;
  if (!cmd) {
    io.err(`runnel: unknown command '${name}'\n${usage()}`);
    return EXIT_USAGE;
  }
  try {
    return cmd.run(rest, io);
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`runnel ${name}: ${e.message}\nusage: ${cmd.usage}`);
      return EXIT_USAGE;
    }
    throw e;
  }
}

const processIo: Io = {
  out: (t) => process.stdout.write(t.endsWith("\n") ? t : `${t}\n`),
  err: (t) => process.stderr.write(t.endsWith("\n") ? t : `${t}\n`),
  write: (t) => process.stdout.write(t),
  bytes: (b) => {
    try {
      writeAll(1, b);
    } catch (e) {
      // A reader that stops early (`| head`) closes the pipe: stop quietly, as other commands do.
      if ((e as NodeJS.ErrnoException).code === "EPIPE") process.exit(process.exitCode ?? 0);
      throw e;
    }
  },
};

/** Runs the command line in this process: `argv` after the command's name; sets the exit status. */
export function cli(argv: string[]): void {
  // A reader that stops early (`| head`) closes the pipe: stop quietly, as other commands do.
  process.stdout.on("error", (e: NodeJS.ErrnoException) => {
    if (e.code !== "EPIPE") throw e;
    process.exit(process.exitCode ?? 0);
  });
  process.exitCode = main(argv, processIo);
}

// Run when executed as a script (npm run runnel runs the bundle through scripts/runnel-bundle.mjs instead).
if (process.argv[1] && import.meta.url === pathToFileURL(realpathSync(process.argv[1])).href)
  cli(process.argv.slice(2));
