/**
 * `node bench/cli-usage.mjs USAGE_FILE ARGS…` runs the command line as `npm run runnel -- ARGS…` does (the bundle
 * through scripts/runnel-bundle.mjs) and, when the process exits, writes its process.resourceUsage() (CPU time,
 * peak resident set) to USAGE_FILE: bench/cli.ts's view of one cold command.
 */
import { writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const [usageFile, ...args] = process.argv.slice(2);
process.on("exit", () => writeFileSync(usageFile, JSON.stringify(process.resourceUsage())));
const launcher = new URL("../scripts/runnel-bundle.mjs", import.meta.url);
process.argv = [process.argv[0], fileURLToPath(launcher), ...args];
await import(launcher.href);
