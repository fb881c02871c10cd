/**
 * The run worker: piscina's entry in a worker thread (bundled to
 * .build/run-worker.mjs by scripts/build-worker.mjs). One connection per
 * database file per thread; the run's progress, results and final state are
 * written from here (SQLite WAL lets the request thread read meanwhile).
 */
import { openDatabase, type DB } from "@/db";
import { executeRun, type RunTask, type RunTaskResult } from "./run-exec";

const connections = new Map<string, DB>();

export default function runTask(task: RunTask): RunTaskResult {
  let d = connections.get(task.dbFile);
  if (!d) {
    d = openDatabase(task.dbFile, { migrate: false });
    connections.set(task.dbFile, d);
  }
  const fault = process.env.RUNNEL_TEST_FAULTS === "1" ? task.fault : undefined;
  return executeRun(task.runId, { stop: new Int32Array(task.stop), fault }, d);
}
