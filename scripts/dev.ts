/**
 * `npm run dev`: Next's development server behind Runnel's own HTTP layer
 * (scripts/lib/next-server.ts --dev), so pages get the same
 * Content-Security-Policy, client-address stamping and cross-site refusal as
 * `npm start`. Migrates the database at $RUNNEL_DB first; --host/--port as for
 * `npm start` (default 127.0.0.1:3000).
 */
import { runScript } from "./lib/fail";
import { serveOptions, startNext } from "./lib/server";

await runScript(async () => {
  await startNext({ ...serveOptions(process.argv.slice(2)), dev: true });
});
