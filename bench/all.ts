/**
 * `npm run bench`: the solver and language workloads (bench/run.ts), then the
 * run API under load (bench/api-runs.ts, which needs the production build; it
 * is built first when missing). With --json or --only, only bench/run.ts runs,
 * so `npm run --silent bench -- --json [--only NAME]` prints exactly its one
 * JSON array; `npm run bench:api -- --json` gives the API figures as JSON.
 *
 * bench/run.ts is bundled first by esbuild into .build/bench-run.mjs, as the
 * run worker is (scripts/build-worker.mjs), and runs as plain JavaScript: the
 * solver is timed as the server runs it. (Under tsx each read of an imported
 * binding is a getter call; the chain's analysis measured about 1.5× slower.)
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import { build } from "esbuild";

const args = process.argv.slice(2);
const tsx = "node_modules/tsx/dist/cli.mjs";
const run = (cmd: string, argv: string[]) =>
  spawnSync(cmd, argv, { stdio: "inherit", env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" } }).status ?? 1;
const BUNDLE = ".build/bench-run.mjs";

build({
  entryPoints: ["bench/run.ts"],
  outfile: BUNDLE,
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
}).then(
  () => process.exit(main()),
  (e: Error) => {
    process.stderr.write(`bench: bundling bench/run.ts failed: ${e.message}\n`);
    process.exit(1);
  },
);

function main(): number {
  let code = run(process.execPath, [BUNDLE, ...args]);
  if (code === 0 && !args.includes("--json") && !args.includes("--only")) {
    if (!fs.existsSync(".next/BUILD_ID") || !fs.existsSync(".build/run-worker.mjs")) {
      console.log("\nbench: building the app for the API workload…");
      code = run("npm", ["run", "--silent", "build"]);
    }
    if (code === 0) {
      console.log("\nRun API under load (bench/api-runs.ts):");
      code = run(process.execPath, [tsx, "bench/api-runs.ts"]);
    }
  }
  return code;
}
