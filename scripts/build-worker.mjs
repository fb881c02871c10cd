/**
 * Bundles the worker-thread entries (each with everything it imports, except
 * native and worker-pool packages) into plain-JS files piscina loads (Node 20
 * cannot load a .ts worker): the run worker (app/lib/run-worker.ts →
 * .build/run-worker.mjs), the interactive worker (app/lib/interactive-worker.ts
 * → .build/interactive-worker.mjs), the export worker (app/lib/export-worker.ts → .build/export-worker.mjs)
 * and a queue worker's chunk processor and solver thread (worker/processor.ts → .build/chunk-processor.mjs,
 * BullMQ's sandboxed processor; worker/solver.ts → .build/chunk-solver.mjs), with the options of scripts/lib/bundle.mjs and a source map.
 * `node scripts/build-worker.mjs` builds them all; importing `buildWorker()` does the same.
 */
import path from "node:path";
import { fileURLToPath } from "node:url";
import { bundle } from "./lib/bundle.mjs";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const WORKER_OUT = path.join(root, ".build", "run-worker.mjs");
export const INTERACTIVE_WORKER_OUT = path.join(root, ".build", "interactive-worker.mjs");
export const EXPORT_WORKER_OUT = path.join(root, ".build", "export-worker.mjs");

const LINKED = { sourcemap: "linked" };

export async function buildWorker() {
  await Promise.all([
    bundle("app/lib/run-worker.ts", path.relative(root, WORKER_OUT), LINKED),
    bundle("app/lib/interactive-worker.ts", path.relative(root, INTERACTIVE_WORKER_OUT), LINKED),
    bundle("app/lib/export-worker.ts", path.relative(root, EXPORT_WORKER_OUT), LINKED),
    bundle("worker/processor.ts", ".build/chunk-processor.mjs", LINKED),
    bundle("worker/solver.ts", ".build/chunk-solver.mjs", LINKED),
  ]);
  return WORKER_OUT;
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const out = await buildWorker();
  console.log(
    `workers: ${[out, INTERACTIVE_WORKER_OUT, EXPORT_WORKER_OUT].map((f) => path.relative(root, f)).join(", ")}`,
  );
}
