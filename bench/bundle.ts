/**
 * Bundles a bench script into one plain-JavaScript ES module, as the run worker is bundled
 * (scripts/lib/bundle.mjs, the same esbuild settings), so the solver is timed as the server runs it
 * (bench/all.ts: bench/run.ts; bench/api-sweep.ts: bench/sweep-direct.ts). `outfile` is relative to the repository.
 */
import { bundle } from "../scripts/lib/bundle.mjs";

export async function bundleScript(entry: string, outfile: string): Promise<void> {
  await bundle(entry, outfile);
}
