/**
 * Run exports, streamed in chunks of a few thousand names so a large run never
 * sits in memory whole, written by a worker thread of their own
 * (`exportInWorker`, app/lib/export-worker.ts) so the request thread only passes bytes on.
 * - CSV (RFC 4180 quoting): `probes` has one row per point (point, sample,
 *   params, probes, solver figures); `nodes`, `devices`, `rails` have one row
 *   per point and name. Numbers are written in full precision (shortest
 *   round-trip form), in SI base units named in the header.
 * - JSON: the document of `runnel solve --json` (docs/language.md, The runnel command) with a `run` member.
 */
import path from "node:path";
import { Worker } from "node:worker_threads";
import type { CommitDiagnostic } from "@/db/schema";
import { databasePath, db, type Q } from "@/db";
import type { JsonPoint } from "@/src/solver/index";
import { csvHeader, csvLine, type CsvTable } from "@/src/solver/csv";
import type { StoredPoint } from "./point-codec";
import { expectationJson } from "@/src/solver/expectation-summary";
import { storedExpectations } from "./run-expectations";
import { eachPoint, readPoint, type RunLayout } from "./results";
import { workerExecArgv } from "./worker-memory";

/** How many names (nodes, devices, rails) one chunk of an export holds: a chunk is a few hundred kB at most. */
export const NAMES_PER_CHUNK = 2048;

/** The rows of one point, NAMES_PER_CHUNK names per chunk (a point of a 2,000,000-device run is ~1,000 chunks). */
export function* csvRows(layout: RunLayout, table: CsvTable, p: StoredPoint): Generator<string> {
  const sliced = function* (count: number, row: (k: number) => string): Generator<string> {
    for (let from = 0; from < count; from += NAMES_PER_CHUNK) {
      let s = "";
      for (let k = from; k < Math.min(count, from + NAMES_PER_CHUNK); k++) s += row(k);
      yield s;
    }
  };
  switch (table) {
    case "probes":
      yield csvLine([p.point, p.sample, ...p.params, ...p.probes, p.method, p.iterations, p.residual, p.error]);
      return;
    case "nodes":
      yield* sliced(layout.nodes.length, (k) =>
        csvLine([p.point, p.sample, layout.nodes[k], layout.nodeIsRail[k] ? 1 : 0, p.nodes[k]]),
      );
      return;
    case "devices":
      yield* sliced(layout.devices.length, (k) =>
        csvLine([
          p.point,
          p.sample,
          layout.devices[k],
          layout.deviceTypes[k] === "n" ? "nfet" : "pfet",
          p.current[k],
          Number.isFinite(p.ic[k]) ? Number(p.ic[k].toPrecision(7)) : null,
          p.saturated[k],
        ]),
      );
      return;
    case "rails":
      yield* sliced(layout.rails.length, (k) => csvLine([p.point, p.sample, layout.rails[k], p.rails[k]]));
      return;
  }
}

/** What an export says about a run that did not end `done`: its results are partial. */
export interface RunStatus {
  id: string;
  state: string;
  reason: string | null;
  pointsDone: number;
  pointsTotal: number;
}

/** A sentence for a run whose stored points are not all of its points; null for a run that ended `done`. */
export function partialNote(run: RunStatus): string | null {
  if (run.state === "done") return null;
  const why = run.reason ? ` (${run.reason.replace(/[\r\n]+/g, " ")})` : "";
  return `run ${run.id} is ${run.state}${why}: this file holds the ${run.pointsDone} of ${run.pointsTotal} points stored so far, not a complete result`;
}

/** What an export says about its run (a run row has more; a worker gets only these). */
export interface ExportRun extends RunStatus {
  model: unknown;
  solverReason: string | null;
}

/** What an export says of the run, in the order the JSON export writes it (its id first, then the commit's). */
export function exportRunOf(run: ExportRun): ExportRun {
  return {
    id: run.id,
    state: run.state,
    reason: run.reason,
    pointsDone: run.pointsDone,
    pointsTotal: run.pointsTotal,
    model: run.model,
    solverReason: run.solverReason,
  };
}

const withoutId = ({ id: _id, ...rest }: ExportRun) => rest;

/** What the JSON export says about the commit. */
export interface ExportCommit {
  id: string;
  ok: boolean;
  diagnostics: CommitDiagnostic[];
}

/** One export, as the export worker (app/lib/export-worker.ts) gets it. */
export interface ExportTask {
  dbFile: string;
  format: "csv" | "json";
  table: CsvTable;
  point?: number;
  run: ExportRun;
  commit: ExportCommit;
}

export const EXPORT_WORKER_FILE = () =>
  path.join(/*turbopackIgnore: true*/ process.cwd(), ".build", "export-worker.mjs");

/** Exports running at once; the next waits for one to end (each holds a run's layout in its thread). */
export const EXPORT_THREADS = Number(process.env.RUNNEL_EXPORT_THREADS ?? 2);
let exporting = 0;
const waiting: (() => void)[] = [];

async function exportSlot(): Promise<() => void> {
  if (exporting >= EXPORT_THREADS) await new Promise<void>((r) => waiting.push(r));
  exporting++;
  let freed = false;
  return () => {
    if (freed) return;
    freed = true;
    exporting--;
    waiting.shift()?.();
  };
}

/**
 * An export as a byte stream written by a worker thread of its own (app/lib/export-worker.ts): the request thread
 * only passes its batches on, one per pull, so a 2,000,000-device run's names are parsed and its points decoded and
 * written in that thread. The thread ends with the stream, and is terminated when the client goes away.
 */
export function exportInWorker(task: Omit<ExportTask, "dbFile">): ReadableStream<Uint8Array> {
  let worker: Worker | null = null;
  let release: () => void = () => {};
  let answer: ((m: { bytes?: Uint8Array; done?: boolean; error?: string }) => void) | null = null;
  let failure: Error | null = null;
  const end = () => {
    const w = worker;
    worker = null;
    release();
    if (w) void w.terminate();
  };
  return new ReadableStream<Uint8Array>(
    {
      async start() {
        release = await exportSlot();
        worker = new Worker(EXPORT_WORKER_FILE(), {
          execArgv: workerExecArgv(),
          workerData: { ...task, dbFile: databasePath() },
        });
        worker.on("message", (m) => answer?.(m));
        worker.on("error", (e) => {
          failure = e;
          answer?.({ error: e.message });
        });
        worker.on("exit", () => answer?.({ error: failure?.message ?? "the export thread ended early" }));
      },
      async pull(controller) {
        if (!worker) return controller.close();
        const m = await new Promise<{ bytes?: Uint8Array; done?: boolean; error?: string }>((r) => {
          answer = r;
          worker!.postMessage({ next: true });
        });
        answer = null;
        if (m.bytes) return controller.enqueue(m.bytes);
        end();
        if (m.done) controller.close();
        else controller.error(new Error(`export of run ${task.run.id} failed: ${m.error}`));
      },
      cancel() {
        end();
      },
    },
    { highWaterMark: 1 },
  );
}

/** The CSV export of a run: a `#` note first when the run is partial (not `done`), then the header and rows. */
export function* csvChunks(
  run: RunStatus,
  layout: RunLayout,
  table: CsvTable,
  point?: number,
  d: Q = db(),
): Generator<string> {
  const note = partialNote(run);
  if (note) yield `# ${note}\r\n`;
  yield csvHeader(table, layout.params, layout.probes);
  if (point !== undefined) {
    const p = readPoint(run.id, point, d);
    if (p) yield* csvRows(layout, table, p);
    return;
  }
  for (const p of eachPoint(run.id, d)) yield* csvRows(layout, table, p);
}

const num = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** The small members of a point's document (all but nodes and devices), in document order. */
function pointHead(layout: RunLayout, p: StoredPoint) {
  const params: Record<string, number | null> = {};
  // Only swept params and temp vary; the document lists every param, as the CLI does.
  layout.params.forEach((name, j) => {
    if (name !== "temp" || layout.sweeps.some((s) => s.param === "temp")) params[name] = num(p.params[j]);
  });
  const rails: Record<string, number | null> = {};
  layout.rails.forEach((name, k) => (rails[name] = num(p.rails[k])));
  const probes: Record<string, number | null> = {};
  layout.probes.forEach((name, k) => (probes[name] = num(p.probes[k])));
  return {
    params,
    rails,
    tail: {
      probes,
      solver: { method: p.method, iterations: p.iterations, residual: num(p.residual) },
      sample: layout.mismatch ? p.sample : 0,
      ...(layout.expectations?.length ? { expectations: verdicts(layout, p) } : {}),
      ...(p.error ? { error: p.error } : {}),
    },
  };
}

/** Whether each expectation holds at the point, by name (null: not solved), as `runnel solve --json` prints it. */
function verdicts(layout: RunLayout, p: StoredPoint): Record<string, boolean | null> {
  const out: Record<string, boolean | null> = {};
  (layout.expectations ?? []).forEach((x, j) => (out[x.name] = p.expectations ? p.expectations.passed[j] === 1 : null));
  return out;
}

/** One point in the `runnel solve --json` shape. */
export function pointJson(layout: RunLayout, p: StoredPoint): JsonPoint {
  const { params, rails, tail } = pointHead(layout, p);
  const nodes: Record<string, number | null> = {};
  layout.nodes.forEach((name, k) => {
    if (!layout.nodeIsRail[k]) nodes[name] = num(p.nodes[k]);
  });
  const devices: Record<string, { current: number | null; ic: number | null; saturated: boolean }> = {};
  layout.devices.forEach(
    (name, k) => (devices[name] = { current: num(p.current[k]), ic: num(p.ic[k]), saturated: p.saturated[k] === 1 }),
  );
  // null where a value is not finite: the same bytes JSON.stringify writes for NaN.
  return { params, nodes, rails, devices, ...tail } as unknown as JsonPoint;
}

/** `"name":value` members of an object, NAMES_PER_CHUNK per chunk, each chunk after the first led by a comma. */
function* members(count: number, member: (k: number) => string | null): Generator<string> {
  let first = true;
  for (let from = 0; from < count; from += NAMES_PER_CHUNK) {
    const parts: string[] = [];
    for (let k = from; k < Math.min(count, from + NAMES_PER_CHUNK); k++) {
      const m = member(k);
      if (m !== null) parts.push(m);
    }
    if (parts.length === 0) continue;
    yield (first ? "" : ",") + parts.join(",");
    first = false;
  }
}

/** `JSON.stringify(pointJson(layout, p))`, in chunks of NAMES_PER_CHUNK names (the same bytes). */
export function* pointJsonChunks(layout: RunLayout, p: StoredPoint): Generator<string> {
  const { params, rails, tail } = pointHead(layout, p);
  const key = (name: string) => JSON.stringify(name) + ":";
  yield `{"params":${JSON.stringify(params)},"nodes":{`;
  yield* members(layout.nodes.length, (k) =>
    layout.nodeIsRail[k] ? null : key(layout.nodes[k]) + JSON.stringify(num(p.nodes[k])),
  );
  yield `},"rails":${JSON.stringify(rails)},"devices":{`;
  yield* members(
    layout.devices.length,
    (k) =>
      key(layout.devices[k]) +
      JSON.stringify({ current: num(p.current[k]), ic: num(p.ic[k]), saturated: p.saturated[k] === 1 }),
  );
  yield "}," + JSON.stringify(tail).slice(1);
}

/** The JSON export of a run: the `runnel solve --json` document with a `run` member (and `partial` when not done). */
export function* jsonChunks(run: ExportRun, commit: ExportCommit, layout: RunLayout, d: Q = db()): Generator<string> {
  const diagnostics = commit.diagnostics.map((x: CommitDiagnostic) => ({
    severity: x.severity,
    line: x.line,
    column: x.column,
    message: x.message,
  }));
  const head = {
    network: layout.network,
    ok: commit.ok,
    run: { id: run.id, commit: commit.id, ...withoutId(exportRunOf(run)) },
    diagnostics,
    // A run that did not end `done` holds only some of its points: say so in the file.
    ...(partialNote(run) ? { partial: partialNote(run) } : {}),
  };
  yield JSON.stringify(head).slice(0, -1) + ',"points":[';
  let first = true;
  for (const p of eachPoint(run.id, d)) {
    if (!first) yield ",";
    yield* pointJsonChunks(layout, p);
    first = false;
  }
  yield "]";
  // The run's expectations (docs/language.md, Expectations), after the points as the command line prints them.
  const expectations = storedExpectations(run.id, d);
  if (expectations) yield `,"expectations":${JSON.stringify(expectations.map(expectationJson))}`;
  yield "}";
}
