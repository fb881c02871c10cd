/**
 * The run worker: piscina's entry in a worker thread of the local pool
 * (bundled to .build/run-worker.mjs by scripts/build-worker.mjs). It solves a
 * chunk of a run into the database, or ends a run from its chunks. One
 * connection per database file per thread (SQLite WAL lets the request thread
 * read meanwhile).
 */
import { openDatabase, type DB } from "@/db";
import {
  dropNetworkCache,
  executeChunk,
  finalizeRun,
  type ChunkResult,
  type RunTask,
  type RunTaskResult,
} from "./run-exec";
import { comparisonCore, type ComparisonCore } from "./review/comparison-core";
import { releaseWhenIdle } from "./worker-memory";

const connections = new Map<string, DB>();

function connection(file: string): DB {
  let d = connections.get(file);
  if (!d) {
    d = openDatabase(file, { migrate: false });
    connections.set(file, d);
  }
  return d;
}

export default function runTask(task: RunTask): ChunkResult | RunTaskResult | ComparisonCore | null {
  try {
    const d = connection(task.dbFile);
    if (task.kind === "finalize") return finalizeRun(task.runId, task.forced, Date.now(), d);
    if (task.kind === "compare") return comparisonCore(task.fromRunId, task.toRunId, task.tolerance, d);
    const fault = process.env.RUNNEL_TEST_FAULTS === "1" ? task.fault : undefined;
    return executeChunk(task.runId, task.chunk, { stop: new Int32Array(task.stop), fault }, d);
  } finally {
    // The elaborated network stays for the run's next chunk; a thread left idle gives it back
    // (app/lib/worker-memory.ts).
    releaseWhenIdle(dropNetworkCache, { pool: "run" });
  }
}
