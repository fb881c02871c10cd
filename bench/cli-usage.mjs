/**
 * `node bench/cli-usage.mjs USAGE_FILE ARGS…` runs the command line as `npm run runnel -- ARGS…` does (the bundle
 * through scripts/runnel-bundle.mjs) and, when the process exits, writes its process.resourceUsage() (CPU time,
 * peak resident set) to USAGE_FILE: bench/cli.ts's view of one cold command.
 */
import { readFileSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const [usageFile, ...args] = process.argv.slice(2);
process.on("exit", () => {
  // The peak resident set from VmHWM: getrusage's maxrss also counts the parent's memory at the fork (Linux keeps it
  // across exec).
  let peakKb = process.resourceUsage().maxRSS;
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync("/proc/self/status", "utf8"));
    if (m) peakKb = Number(m[1]);
  } catch {
    // not Linux
  }
  writeFileSync(usageFile, JSON.stringify({ ...process.resourceUsage(), peakKb }));
});
const launcher = new URL("../scripts/runnel-bundle.mjs", import.meta.url);
process.argv = [process.argv[0], fileURLToPath(launcher), ...args];
await import(launcher.href);
