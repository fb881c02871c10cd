/**
 * `npm run test:browser`: builds the app, then runs the Playwright tests in
 * Debian's Chromium against a freshly seeded demo database. Where no Chromium
 * exists it says so and skips only these tests.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";

const chromium = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
if (!fs.existsSync(chromium)) {
  console.log(
    `browser tests SKIPPED: no Chromium at ${chromium} (install Debian's chromium package, or set CHROMIUM_PATH)`,
  );
  process.exit(0);
}

const env = { ...process.env, NEXT_TELEMETRY_DISABLED: "1" };
const run = (cmd: string, args: string[]) => spawnSync(cmd, args, { stdio: "inherit", env }).status ?? 1;

fs.rmSync("test-results/e2e", { recursive: true, force: true });
fs.mkdirSync("test-results/e2e", { recursive: true });
if (
  run(process.execPath, ["scripts/build-worker.mjs"]) !== 0 ||
  run(process.execPath, ["node_modules/next/dist/bin/next", "build"]) !== 0 ||
  run(process.execPath, ["scripts/precompress.mjs"]) !== 0
) {
  console.error("browser tests: the build failed");
  process.exit(1);
}
process.exit(run(process.execPath, ["node_modules/@playwright/test/cli.js", "test", ...process.argv.slice(2)]));
