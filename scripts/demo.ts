/**
 * `npm run demo`: builds the app when the build is missing or older than the
 * sources, migrates and seeds the demo database, starts the local SMTP sink on
 * 127.0.0.1 (port $RUNNEL_MAIL_SINK_PORT, or a free one) whose messages the dev
 * mailbox (/dev/mailbox) lists, and serves the app on http://127.0.0.1:3000
 * (or --port N) in demo mode (RUNNEL_DEMO=1: demo accounts shown on /signin).
 *
 * `--queue redis`: runs go through the Redis queue instead of the in-process
 * pool: a private redis-server on a free loopback port (no persistence), an
 * operator worker token made for this session, and one queue worker process
 * (`npm run worker`) with a thread per core; all end with the demo.
 */
import { spawn, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { databasePath, openDatabase } from "../db";
import { seedDemo } from "./seed/index";
import { fail, runScript } from "./lib/fail";
import { startMailSink, storeInMailbox } from "./lib/mail-sink";
import { startRedis } from "./lib/redis";
import { serveOptions, startNext } from "./lib/server";
import { newSecret, secretHash } from "../app/lib/secrets";
import { WORKER_TOKEN_PREFIX } from "../app/lib/queue-protocol";

const SOURCES = [
  "app",
  "src",
  "db",
  "worker",
  "grammar",
  "migrations",
  "next.config.ts",
  "package.json",
  "postcss.config.mjs",
];

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

/** `--queue local|redis` out of the arguments; the rest are the server's. */
function queueOption(argv: string[]): { queue: "local" | "redis"; rest: string[] } {
  const at = argv.indexOf("--queue");
  if (at < 0) return { queue: "local", rest: argv };
  const queue = argv[at + 1];
  if (queue !== "local" && queue !== "redis") fail(`--queue: local or redis, not ${JSON.stringify(queue ?? "")}`, 2);
  return { queue, rest: [...argv.slice(0, at), ...argv.slice(at + 2)] };
}

await runScript(async () => {
  const { queue, rest } = queueOption(process.argv.slice(2));
  const options = serveOptions(rest);
  if (!buildIsCurrent()) {
    console.log("runnel demo: building the app (about a minute on a fresh clone)…");
    const r = spawnSync("npm", ["run", "--silent", "build"], {
      stdio: "inherit",
      env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" },
    });
    if (r.status !== 0) fail("the build failed (see the output above)");
  }
  const file = databasePath();
  const db = openDatabase(file);
  const counts = seedDemo(db);
  console.log(`runnel demo: ${counts.users} users, ${counts.workspaces} workspaces in ${file}`);
  // The sink keeps this connection to store what it receives; it lives as long as this process.
  const sink = await startMailSink({
    port: Number(process.env.RUNNEL_MAIL_SINK_PORT ?? 0),
    onMessage: storeInMailbox(db),
  }).catch((e: Error) => fail(`cannot start the local mail sink on 127.0.0.1: ${e.message}`));
  const site = `http://${options.host === "0.0.0.0" ? "localhost" : options.host}:${options.port}`;
  console.log(`runnel demo: mail goes to the local sink on 127.0.0.1:${sink.port}; read it at ${site}/dev/mailbox`);
  console.log(`runnel demo: open ${site}/ (demo accounts and their password are on the sign-in page)`);
  const env: Record<string, string> = {
    RUNNEL_DEMO: "1",
    RUNNEL_MAIL_SINK_PORT: String(sink.port),
    RUNNEL_SMTP_URL: "",
  };
  let workerToken = "";
  let redisUrl = "";
  if (queue === "redis") {
    const redis = await startRedis().catch((e: Error) => fail(e.message));
    process.on("exit", () => redis.child.kill("SIGTERM"));
    workerToken = newSecret(WORKER_TOKEN_PREFIX);
    redisUrl = redis.url;
    Object.assign(env, {
      RUNNEL_QUEUE: "redis",
      REDIS_URL: redis.url,
      RUNNEL_WORKER_TOKEN_HASHES: secretHash(workerToken),
    });
    console.log(`runnel demo: runs go through the Redis queue at ${redis.url}, solved by one queue worker process`);
  }
  await startNext({ ...options, env });
  if (queue === "redis") {
    const worker = spawn(
      process.execPath,
      ["--import", "tsx", "worker/main.ts", "--app", site, "--token", workerToken, "--redis", redisUrl],
      { stdio: "inherit" },
    );
    process.on("exit", () => worker.kill("SIGTERM"));
  }
});
