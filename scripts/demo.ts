/**
 * `npm run demo`: builds the app when the build is missing or older than the
 * sources, migrates and seeds the demo database, and serves it on
 * http://127.0.0.1:3000 (or --port N).
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { databasePath, openDatabase } from "../db";
import { seedDemo } from "../db/seed";
import { fail, runScript } from "./lib/fail";
import { serveOptions, startNext } from "./lib/server";

const SOURCES = ["app", "src", "db", "grammar", "migrations", "next.config.ts", "package.json", "postcss.config.mjs"];

function newestMtime(p: string): number {
  if (!fs.existsSync(p)) return 0;
  const st = fs.statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let newest = st.mtimeMs;
  for (const e of fs.readdirSync(p)) newest = Math.max(newest, newestMtime(path.join(p, e)));
  return newest;
}

function buildIsCurrent(): boolean {
  const stamp = ".next/BUILD_ID";
  if (!fs.existsSync(stamp)) return false;
  const built = fs.statSync(stamp).mtimeMs;
  return SOURCES.every((s) => newestMtime(s) <= built);
}

await runScript(async () => {
  const options = serveOptions(process.argv.slice(2));
  if (!buildIsCurrent()) {
    console.log("rill demo: building the app (about a minute on a fresh clone)…");
    const r = spawnSync("npm", ["run", "--silent", "build"], { stdio: "inherit", env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" } });
    if (r.status !== 0) fail("the build failed (see the output above)");
  }
  const file = databasePath();
  const db = openDatabase(file);
  const counts = seedDemo(db);
  db.$client.close();
  console.log(`rill demo: ${counts.users} users, ${counts.workspaces} workspaces in ${file}`);
  console.log(`rill demo: open http://${options.host === "0.0.0.0" ? "localhost" : options.host}:${options.port}/`);
  await startNext({ ...options, env: { RILL_DEMO: "1" } });
});
