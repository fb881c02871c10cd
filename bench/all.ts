/**
 * `npm run bench`: the solver and language workloads (bench/run.ts), then the
 * run API under load (bench/api-runs.ts, which needs the production build; it
 * is built first when missing). With --json or --only, only bench/run.ts runs,
 * so `npm run --silent bench -- --json [--only NAME]` prints exactly its one
 * JSON array; `npm run bench:api -- --json` gives the API figures as JSON.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";

const args = process.argv.slice(2);
const tsx = "node_modules/tsx/dist/cli.mjs";
const run = (cmd: string, argv: string[]) => spawnSync(cmd, argv, { stdio: "inherit", env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" } }).status ?? 1;

let code = run(process.execPath, [tsx, "bench/run.ts", ...args]);
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
process.exit(code);
