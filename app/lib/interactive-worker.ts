/**
 * The interactive worker: piscina's entry for work a request waits on
 * (bundled to .build/interactive-worker.mjs by scripts/build-worker.mjs).
 * Computation on what the task carries; the one task that writes, storing a
 * measurement, does it through the thread's own connection to the database
 * file the task names (a million-row CSV is 16 MB of values: packing and
 * inserting them took 0.3–0.9 s that the request thread no longer spends).
 * No network.
 */
import { openDatabase, type DB } from "@/db";
import { isBusy } from "./db-busy";
import { storeMeasurement } from "./review/measurement-store";
import type { Tolerance } from "./review/results-diff";
import { comparisonCore, type ComparisonCore } from "./review/comparison-core";
import { parseMeasurementCsv, type CsvError, type ParseResult } from "./review/measurements";
import { checkNetworkText, planNetworkText, type PlanText, type TextCheck } from "./text-check";
import { seekView, sensitivityView, type SeekSpec, type SeekView, type SensitivityView } from "./sensitivity-view";
import { commitStructure, type StructureView } from "./structure";
import { releaseWhenIdle } from "./worker-memory";

export type InteractiveTask =
  | { kind: "check"; text: string }
  | { kind: "plan"; text: string; workers: number; extraPointMs?: number }
  | { kind: "csv"; bytes: Uint8Array }
  | { kind: "store-csv"; bytes: Uint8Array; dbFile: string; measurement: MeasurementFields }
  | { kind: "compare"; dbFile: string; fromRunId: string; toRunId: string; tolerance: Tolerance }
  | { kind: "sensitivity"; text: string }
  | { kind: "seek"; text: string; spec?: SeekSpec }
  | { kind: "structure"; commitId: string; text: string; query: string };

export type { ComparisonCore };

/** What is stored with a measurement besides its values (already authorised by the route). */
export interface MeasurementFields {
  networkId: string;
  name: string;
  note: string;
  commitId: string | null;
  createdBy: string;
}

/** A stored measurement's id; or the CSV's problems (nothing stored); or the database stayed locked. */
export type StoreCsvResult = { ok: true; id: string } | { ok: false; errors: CsvError[] } | { ok: false; busy: true };
export type InteractiveResult<T extends InteractiveTask> = T extends { kind: "check" }
  ? TextCheck
  : T extends { kind: "plan" }
    ? PlanText | null
    : T extends { kind: "csv" }
      ? ParseResult
      : T extends { kind: "store-csv" }
        ? StoreCsvResult
        : T extends { kind: "sensitivity" }
          ? SensitivityView
          : T extends { kind: "seek" }
            ? SeekView
            : T extends { kind: "structure" }
              ? StructureView | null
              : ComparisonCore | null;

let connection: { file: string; db: DB } | null = null;
/** The thread's connection to `file` (opened once; it waits up to 5 s for a lock, off the request thread). */
function database(file: string): DB {
  if (connection?.file !== file) {
    connection?.db.$client.close();
    connection = { file, db: openDatabase(file, { migrate: false }) };
  }
  return connection.db;
}

function storeCsv(task: Extract<InteractiveTask, { kind: "store-csv" }>): StoreCsvResult {
  const parsed = parseMeasurementCsv(task.bytes);
  if (!parsed.ok) return { ok: false, errors: parsed.errors };
  try {
    return {
      ok: true,
      id: storeMeasurement({ ...task.measurement, bytes: task.bytes, parsed }, database(task.dbFile)),
    };
  } catch (e) {
    if (isBusy(e)) return { ok: false, busy: true };
    throw e;
  }
}

/** Reads both done runs through the thread's connection and compares them (seconds for a 1,000-point sweep). */
function compare(task: Extract<InteractiveTask, { kind: "compare" }>): ComparisonCore | null {
  return comparisonCore(task.fromRunId, task.toRunId, task.tolerance, database(task.dbFile));
}

export default function interactiveTask(
  task: InteractiveTask,
):
  | TextCheck
  | PlanText
  | ParseResult
  | StoreCsvResult
  | ComparisonCore
  | SensitivityView
  | SeekView
  | StructureView
  | null {
  try {
    switch (task.kind) {
      case "check":
        return checkNetworkText(task.text);
      case "plan":
        return planNetworkText(task.text, task.workers, task.extraPointMs);
      case "csv":
        return parseMeasurementCsv(task.bytes);
      case "store-csv":
        return storeCsv(task);
      case "compare":
        return compare(task);
      case "sensitivity":
        return sensitivityView(task.text);
      case "seek":
        return seekView(task.text, task.spec);
      case "structure":
        return commitStructure(task.commitId, task.text, task.query);
    }
  } finally {
    // The kept thread gives back what the task left (a large network's elaboration) once it is idle.
    releaseWhenIdle(undefined, { pool: "interactive" });
  }
}
