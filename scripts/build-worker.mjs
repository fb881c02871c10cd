/**
 * Bundles the worker-thread entries (each with everything it imports, except
 * native and worker-pool packages) into plain-JS files piscina loads (Node 20
 * cannot load a .ts worker): the run worker (app/lib/run-worker.ts →
 * .build/run-worker.mjs), the interactive worker (app/lib/interactive-worker.ts
 * → .build/interactive-worker.mjs) and the export worker (app/lib/export-worker.ts → .build/export-worker.mjs).
 * `node scripts/build-worker.mjs` builds both; importing `buildWorker()` does the same.
 */
import { build } from "esbuild";
import path from "node:path";
import { fileURLToPath } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const WORKER_OUT = path.join(root, ".build", "run-worker.mjs");
export const INTERACTIVE_WORKER_OUT = path.join(root, ".build", "interactive-worker.mjs");
export const EXPORT_WORKER_OUT = path.join(root, ".build", "export-worker.mjs");

export async function buildWorker() {
  await Promise.all([
    bundle("app/lib/run-worker.ts", WORKER_OUT),
    bundle("app/lib/interactive-worker.ts", INTERACTIVE_WORKER_OUT),
    bundle("app/lib/export-worker.ts", EXPORT_WORKER_OUT),
  ]);
  return WORKER_OUT;
}

function bundle(entry, outfile) {
  return build({
    absWorkingDir: root,
    entryPoints: [entry],
    outfile,
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    tsconfig: "tsconfig.json",
    // Native modules and piscina itself load from node_modules at run time.
    external: ["better-sqlite3", "piscina"],
    // ESM output still meets CommonJS dependencies that call require().
    banner: {
      js: "import { createRequire as __runnelRequire } from 'node:module'; const require = __runnelRequire(import.meta.url);",
    },
    sourcemap: "linked",
    logLevel: "warning",
  });
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const out = await buildWorker();
  console.log(
    `workers: ${[out, INTERACTIVE_WORKER_OUT, EXPORT_WORKER_OUT].map((f) => path.relative(root, f)).join(", ")}`,
  );
}
