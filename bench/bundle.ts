/**
 * Bundles a bench script with esbuild into one plain-JavaScript ES module, as
 * the run worker is bundled (scripts/build-worker.mjs), so the solver is timed
 * as the server runs it (bench/all.ts: bench/run.ts; bench/api-sweep.ts:
 * bench/sweep-direct.ts).
 */
import { build } from "esbuild";

export async function bundleScript(entry: string, outfile: string): Promise<void> {
  await build({
    entryPoints: [entry],
    outfile,
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    tsconfig: "tsconfig.json",
    // ESM output still meets CommonJS dependencies that call require().
    banner: {
      js: "import { createRequire as __runnelRequire } from 'node:module'; const require = __runnelRequire(import.meta.url);",
    },
    logLevel: "warning",
  });
}
