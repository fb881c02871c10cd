/**
 * Bundles the run worker (app/lib/run-worker.ts and everything it imports,
 * except native and worker-pool packages) into .build/run-worker.mjs, the
 * plain-JS file piscina loads (Node 20 cannot load a .ts worker).
 * `node scripts/build-worker.mjs` builds; importing `buildWorker()` does the same.
 */
import { build } from "esbuild";
import path from "node:path";
import { fileURLToPath } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const WORKER_OUT = path.join(root, ".build", "run-worker.mjs");

export async function buildWorker() {
  await build({
    absWorkingDir: root,
    entryPoints: ["app/lib/run-worker.ts"],
    outfile: WORKER_OUT,
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
  return WORKER_OUT;
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const out = await buildWorker();
  console.log(`run worker: ${path.relative(root, out)}`);
}
