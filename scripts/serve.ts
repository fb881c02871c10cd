/**
 * Starts the built app on --host/--port: migrates the database at $RUNNEL_DB
 * (default data/runnel.db), checks the port, then runs `next start`.
 * Every setup failure is one line on stderr and exit 1.
 */
import { runScript } from "./lib/fail";
import { serveOptions, startNext } from "./lib/server";

await runScript(async () => {
  await startNext(serveOptions(process.argv.slice(2)));
});
