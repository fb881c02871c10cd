/**
 * The export worker: one thread per download (bundled to .build/export-worker.mjs by scripts/build-worker.mjs),
 * started by `exportInWorker` (app/lib/export.ts). It opens its own connection, reads the run's layout (parsing a
 * large network's names takes seconds: here, not on the request thread) and its points, and writes the CSV or JSON
 * text. The request thread asks for one batch at a time (`{ next: true }`); the thread answers with about
 * BATCH_BYTES of encoded text (its buffer transferred, not copied), `{ done: true }` at the end, or `{ error }`.
 */
import { parentPort, workerData } from "node:worker_threads";
import { openDatabase } from "@/db";
import { csvChunks, jsonChunks, type ExportTask } from "./export";
import { runLayout } from "./results";

/** About this much text per message to the request thread. */
const BATCH_BYTES = 256 * 1024;

const task = workerData as ExportTask;
const d = openDatabase(task.dbFile, { migrate: false });
const enc = new TextEncoder();

function* chunks(): Generator<string> {
  const layout = runLayout(task.run.id, d);
  if (!layout) throw new Error(`the run has no results yet (${task.run.state})`);
  if (task.format === "json") yield* jsonChunks(task.run, task.commit, layout, d);
  else yield* csvChunks(task.run, layout, task.table, task.point, d);
}
const source = chunks();

parentPort!.on("message", () => {
  try {
    let text = "";
    while (text.length < BATCH_BYTES) {
      const next = source.next();
      if (next.done) break;
      text += next.value;
    }
    if (text.length === 0) {
      parentPort!.postMessage({ done: true });
      d.$client.close();
      return;
    }
    const bytes = enc.encode(text);
    parentPort!.postMessage({ bytes }, [bytes.buffer]);
  } catch (e) {
    parentPort!.postMessage({ error: (e as Error).message });
  }
});
