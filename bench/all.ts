/**
 * `npm run bench`: the solver and language workloads (bench/run.ts, with the
 * CHOLMOD reference side by side when it can be built), the command line end
 * to end (bench/cli.ts), the design tools (bench/design.ts: sensitivities, goal-seek), then the run API under load (bench/api-runs.ts, which
 * needs the production build; it is built first when missing).
 *
 * The CHOLMOD reference is a C program kept outside the repository:
 * $RUNNEL_ANCHORS/cholmod-ref.c when that variable names its folder, built with `cc` against
 * Debian's libsuitesparse-dev into .build/cholmod-ref; without the source,
 * the headers or a compiler the comparison is skipped with a message. With --json or --only, only bench/run.ts runs,
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
import path from "node:path";
import { bundleScript } from "./bundle";

const args = process.argv.slice(2);
const tsx = "node_modules/tsx/dist/cli.mjs";
const run = (cmd: string, argv: string[]) =>
  spawnSync(cmd, argv, { stdio: "inherit", env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" } }).status ?? 1;
const BUNDLE = ".build/bench-run.mjs";

bundleScript("bench/run.ts", BUNDLE).then(
  () => process.exit(main()),
  (e: Error) => {
    process.stderr.write(`bench: bundling bench/run.ts failed: ${e.message}\n`);
    process.exit(1);
  },
);

/** The CHOLMOD reference program, built when its source, Debian's headers and a C compiler are here. */
function cholmodReference(): { bin?: string; skip?: string } {
  const dir = process.env.RUNNEL_ANCHORS;
  if (!dir) return { skip: "no reference source (set RUNNEL_ANCHORS to the folder holding cholmod-ref.c)" };
  const src = path.resolve(dir, "cholmod-ref.c");
  if (!fs.existsSync(src)) return { skip: `no reference source at ${src} ($RUNNEL_ANCHORS/cholmod-ref.c)` };
  if (!fs.existsSync("/usr/include/suitesparse/cholmod.h"))
    return { skip: "CHOLMOD's headers are missing (apt-get install libsuitesparse-dev)" };
  const bin = path.resolve(".build/cholmod-ref");
  if (fs.existsSync(bin) && fs.statSync(bin).mtimeMs >= fs.statSync(src).mtimeMs) return { bin };
  const cc = spawnSync("cc", ["-O2", "-o", bin, src, "-I/usr/include/suitesparse", "-lcholmod", "-lm"], {
    encoding: "utf8",
  });
  if (cc.error || cc.status !== 0) return { skip: `building it failed: ${cc.error?.message ?? cc.stderr}` };
  return { bin };
}

function main(): number {
  const quickOrJson = args.includes("--json") || args.includes("--only");
  const ref = quickOrJson ? {} : cholmodReference();
  if (ref.bin) process.env.RUNNEL_CHOLMOD_REF = ref.bin;
  else if (ref.skip) process.env.RUNNEL_CHOLMOD_SKIP = ref.skip;
  let code = run(process.execPath, [BUNDLE, ...args]);
  if (code === 0 && !quickOrJson) {
    console.log("");
    code = run(process.execPath, [tsx, "bench/cli.ts"]);
  }
  if (code === 0 && !quickOrJson) {
    console.log("");
    code = run(process.execPath, [tsx, "bench/design.ts"]);
  }
  if (code === 0 && !quickOrJson) {
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
