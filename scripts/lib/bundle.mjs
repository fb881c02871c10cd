/**
 * Bundles a TypeScript entry point (and everything it imports) into one
 * plain-JS ES module under .build/, as the run worker is bundled
 * (scripts/build-worker.mjs): one file parses and starts far faster than
 * hundreds of transpiled modules.
 *
 * `freshBundle(entry, out)` rebuilds only when the bundle is missing or any
 * file it was built from (its esbuild metafile's inputs, node_modules
 * included) is newer than it: a changed import lives in an edited file, so
 * the previous inputs' times are enough.
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

/**
 * Builds `entry` into `out` (both relative to the repository); writes `out`.inputs.json beside it. `options` adds
 * esbuild options (the workers add a source map).
 */
export async function bundle(entry, out, options = {}) {
  const { build } = await import("esbuild");
  const outfile = path.join(root, out);
  const result = await build({
    absWorkingDir: root,
    entryPoints: [entry],
    outfile,
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    tsconfig: "tsconfig.json",
    // Native modules and the worker pool load from node_modules at run time.
    external: ["better-sqlite3", "piscina"],
    // ESM output still meets CommonJS dependencies that call require().
    banner: {
      js: "import { createRequire as __runnelRequire } from 'node:module'; const require = __runnelRequire(import.meta.url);",
    },
    metafile: true,
    logLevel: "warning",
    ...options,
  });
  fs.writeFileSync(`${outfile}.inputs.json`, JSON.stringify(Object.keys(result.metafile.inputs)));
  return outfile;
}

/** The bundle of `entry` at `out`, rebuilt first when it is missing or older than any of its inputs. */
export async function freshBundle(entry, out) {
  const outfile = path.join(root, out);
  let built = -1;
  let inputs = null;
  try {
    built = fs.statSync(outfile).mtimeMs;
    inputs = JSON.parse(fs.readFileSync(`${outfile}.inputs.json`, "utf8"));
  } catch {
    return bundle(entry, out);
  }
  for (const f of inputs) {
    let t;
    try {
      t = fs.statSync(path.join(root, f)).mtimeMs;
    } catch {
      return bundle(entry, out);
    }
    if (t > built) return bundle(entry, out);
  }
  return outfile;
}
