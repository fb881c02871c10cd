/**
 * The `runnel` command line: `runnel check FILE [--json]`, `runnel solve FILE --json`.
 * Exit status: 0 ok, 1 the network has errors, 2 usage error (including an unreadable file).
 * File reading lives here only; src/lang has no I/O.
 */
import { readFileSync, realpathSync, statSync } from "node:fs";
import { pathToFileURL } from "node:url";
import {
  DEFAULT_LIMITS,
  diagnosticsDocument,
  elaborate,
  type ElaborationResult,
  formatDiagnostics,
  tooLargeResult,
} from "../src/lang/index";
import type { Network } from "../src/lang/network";
import { pointCount, pointJson, type RunResult, solveNetwork, type SolveJson, toSolveJson } from "../src/solver/index";

const EXIT_OK = 0;
const EXIT_ERRORS = 1;
const EXIT_USAGE = 2;

export interface Io {
  out(text: string): void;
  err(text: string): void;
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
 * Most values `runnel solve --json` prints (points × values per point), checked
 * before anything is solved. About 40 bytes each in the printed text
 * (measured: 16.5 M values printed 628 MB), so the document stays below
 * 512 M characters, the longest string Node.js reads whole.
 */
export const MAX_PRINTED_VALUES = 10_000_000;

/** What one point prints: every node's voltage and rail current, each device's three values, probes and params. */
function printedValues(net: Network): number {
  return (
    pointCount(net) * (2 * net.nodes.names.length + 3 * net.devices.count + net.probes.length + net.params.length + 8)
  );
}

/** The document as JSON.stringify(doc, null, 2) prints it, written a point at a time. */
function writeSolveJson(doc: SolveJson, net: Network | null, run: RunResult | null, io: Io): void {
  const points = doc.ok && net && run ? run.points : [];
  const head = JSON.stringify({ ...doc, points: [] }, null, 2);
  if (points.length === 0) {
    io.out(head);
    return;
  }
  // head ends with `"points": []` and the closing brace: open the array there instead.
  io.out(`${head.slice(0, head.lastIndexOf("[]"))}[\n`);
  for (let k = 0; k < points.length; k++) {
    const text = JSON.stringify(pointJson(net as Network, points[k]), null, 2).replace(/\n/g, "\n    ");
    io.out(`    ${text}${k + 1 < points.length ? "," : ""}\n`);
  }
  io.out("  ]\n}\n");
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

const solve: Subcommand = {
  usage: "runnel solve FILE --json",
  summary: "solve every point and print one JSON document",
  run(args, io) {
    const { file, flags } = fileAndFlags(args, ["--json"]);
    const result = elaborateFile(file);
    const net = result.network;
    // The text places solver diagnostics at their device's line (the file was readable a moment ago).
    const text = net ? readFileSync(file, "utf8") : undefined;
    const printed = net ? printedValues(net) : 0;
    if (net && printed > MAX_PRINTED_VALUES) {
      const at = net.sweeps[0]?.span.from ?? 0;
      const line = (text ?? "").slice(0, at).split("\n").length;
      const message = `this run would print about ${printed.toExponential(1)} values (${pointCount(net).toLocaleString("en-US")} points of ${net.nodes.names.length.toLocaleString("en-US")} nodes and ${net.devices.count.toLocaleString("en-US")} device${net.devices.count === 1 ? "" : "s"}), more than the command line's ${MAX_PRINTED_VALUES.toLocaleString("en-US")}: use fewer points, or run it in the workbench, which stores results point by point`;
      const doc = toSolveJson(
        null,
        [...result.diagnostics, { severity: "error", line, column: 1, from: at, to: at, message }],
        null,
        undefined,
        net.name,
      );
      if (flags.has("--json")) io.out(JSON.stringify(doc, null, 2));
      else
        io.out(
          formatDiagnostics(
            file,
            doc.diagnostics.map((d) => ({ ...d, from: 0, to: 0 })),
          ),
        );
      return EXIT_ERRORS;
    }
    const run = net ? solveNetwork(net, { onProgress: progress(io) }) : null;
    const doc = toSolveJson(net, result.diagnostics, run, text, result.name, false);
    if (flags.has("--json")) writeSolveJson(doc, net, run, io);
    else {
      if (doc.diagnostics.length)
        io.out(
          formatDiagnostics(
            file,
            doc.diagnostics.map((d) => ({ ...d, from: 0, to: 0 })),
          ),
        );
      if (run)
        io.out(
          `${file}: ${run.solved} point${run.solved === 1 ? "" : "s"}, ${run.method} (${run.reason})${doc.ok ? "" : ", with errors"}`,
        );
    }
    return doc.ok ? EXIT_OK : EXIT_ERRORS;
  },
};

/** The subcommands; adding one is one entry here. */
const SUBCOMMANDS: Record<string, Subcommand> = { check, solve };

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

const io: Io = {
  out: (t) => process.stdout.write(t.endsWith("\n") ? t : `${t}\n`),
  err: (t) => process.stderr.write(t.endsWith("\n") ? t : `${t}\n`),
};

// Run when executed as a script (not when a test imports `main`).
if (process.argv[1] && import.meta.url === pathToFileURL(realpathSync(process.argv[1])).href) {
  // A reader that stops early (`| head`) closes the pipe: stop quietly, as other commands do.
  process.stdout.on("error", (e: NodeJS.ErrnoException) => {
    if (e.code !== "EPIPE") throw e;
    process.exit(process.exitCode ?? 0);
  });
  process.exitCode = main(process.argv.slice(2), io);
}
