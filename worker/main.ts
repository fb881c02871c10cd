/**
 * `npm run worker`: a queue worker. Takes chunks of runs from the Redis queue
 * the app names for its token, solves them in BullMQ's sandboxed processor
 * (worker threads; .build/chunk-processor.mjs) and posts the results to the
 * app over HTTP. Runs on any machine that can reach the app and Redis.
 *
 *   npm run worker -- --app https://runnel.example.org --token runnel_worker_… [--redis redis://host:6379] [--threads N]
 *   npm run worker -- --new-token      # prints an operator token and the hash for RUNNEL_WORKER_TOKEN_HASHES
 *
 * Settings may come from the environment instead: RUNNEL_APP_URL, RUNNEL_WORKER_TOKEN, REDIS_URL,
 * RUNNEL_WORKER_THREADS. SIGINT/SIGTERM stops taking chunks and lets the ones being solved finish (a second
 * signal aborts them; the app hands them out again).
 */
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { parseArgs } from "node:util";
import { QueueEvents, Worker, type Job } from "bullmq";
import { Redis } from "ioredis";
import { STOP_EVENT, WORKER_TOKEN_PREFIX } from "@/app/lib/queue-protocol";
import { newSecret, secretHash } from "@/app/lib/secrets";
import { AppClient, AppRefusal } from "./app-client";
import type { ChunkJob } from "./processor";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const PROCESSOR = path.join(root, ".build", "chunk-processor.mjs");

function fail(message: string): never {
  console.error(`runnel worker: ${message}`);
  process.exit(1);
}

const { values } = parseArgs({
  options: {
    app: { type: "string" },
    token: { type: "string" },
    redis: { type: "string" },
    threads: { type: "string" },
    "new-token": { type: "boolean" },
  },
});

if (values["new-token"]) {
  const token = newSecret(WORKER_TOKEN_PREFIX);
  const hash = secretHash(token);
  console.log(`token (give it to the worker machines):       ${token}`);
  console.log(`hash (add to RUNNEL_WORKER_TOKEN_HASHES on the app host): ${hash}`);
  process.exit(0);
}

const appUrl = values.app ?? process.env.RUNNEL_APP_URL ?? fail("give the app's URL: --app URL (or RUNNEL_APP_URL)");
const token =
  values.token ?? process.env.RUNNEL_WORKER_TOKEN ?? fail("give a worker token: --token T (or RUNNEL_WORKER_TOKEN)");
const redisUrl = values.redis ?? process.env.REDIS_URL ?? "redis://127.0.0.1:6379";
const threads = Number(values.threads ?? process.env.RUNNEL_WORKER_THREADS ?? os.availableParallelism());
if (!Number.isInteger(threads) || threads < 1) fail(`--threads: a whole number of at least 1, not "${values.threads}"`);
try {
  new URL(appUrl);
} catch {
  fail(`--app: not a URL: ${appUrl}`);
}
// The sandboxed processors read these (worker threads start with a copy of this process's environment).
process.env.RUNNEL_APP_URL = appUrl;
process.env.RUNNEL_WORKER_TOKEN = token;

const app = new AppClient(appUrl, token);
let hello;
try {
  hello = await app.hello();
} catch (e) {
  fail((e as Error).message);
}

const connection = new Redis(redisUrl, { maxRetriesPerRequest: null });
connection.on("error", (e) => {
  if (!/ECONNREFUSED|ECONNRESET/.test(e.message)) console.error(`runnel worker: Redis: ${e.message}`);
});
const worker = new Worker<ChunkJob>(hello.queue, PROCESSOR, {
  connection,
  useWorkerThreads: true,
  concurrency: threads,
  lockDuration: hello.lockMs,
  stalledInterval: hello.stalledMs,
  maxStalledCount: 3,
});
worker.on("error", (e) => console.error(`runnel worker: ${e.message}`));
worker.on("failed", (job: Job | undefined, e: Error) => {
  console.error(`runnel worker: chunk ${job?.data.runId}#${job?.data.chunk} failed: ${e.message}`);
  // The app refused the token (revoked, or never valid): taking more chunks would only fail them too.
  if (/valid worker token/.test(e.message)) refused();
});

// The app's stop event (cancel, time limit, a failed chunk) aborts this worker's chunks of that run at once.
const active = new Map<string, ChunkJob>();
worker.on("active", (job: Job<ChunkJob>) => active.set(job.id!, job.data));
worker.on("completed", (job: Job<ChunkJob>) => active.delete(job.id!));
worker.on("failed", (job: Job<ChunkJob> | undefined) => job && active.delete(job.id!));
const eventsConnection = connection.duplicate();
eventsConnection.on("error", () => undefined);
const events = new QueueEvents(hello.queue, { connection: eventsConnection });
events.on("error", () => undefined);
events.on(
  STOP_EVENT as "error",
  ((e: { runId: string }) => {
    for (const [id, data] of active) if (data.runId === e.runId) worker.cancelJob(id, "the run was stopped");
  }) as never,
);

// Workspace workers say they are present; the app routes their workspace's runs to them while they are.
const heartbeat = setInterval(
  () =>
    void app.hello().catch((e) => {
      if (e instanceof AppRefusal && e.status === 401) refused();
    }),
  30_000,
);
heartbeat.unref();

console.log(
  `runnel worker: solving chunks from ${hello.queue} (${hello.workspace ? `workspace ${hello.workspace}` : "every workspace"}) for ${appUrl} with ${threads} thread${threads === 1 ? "" : "s"}; Redis ${redisUrl.replace(/\/\/[^@]*@/, "//…@")}`,
);

let stopping = false;
async function shutdown(): Promise<void> {
  if (stopping) {
    worker.cancelAllJobs("the worker was stopped");
    process.exit(1);
  }
  stopping = true;
  console.log("runnel worker: stopping after the chunks being solved (signal again to abort them)");
  clearInterval(heartbeat);
  await worker.close();
  await events.close();
  connection.disconnect();
  eventsConnection.disconnect();
  process.exit(process.exitCode ?? 0);
}
/** The app refused this worker's token: stop taking chunks and exit with status 1. */
function refused(): void {
  if (stopping) return;
  console.error("runnel worker: the app refused this worker's token (revoked or wrong): stopping");
  process.exitCode = 1;
  void shutdown();
}
process.on("SIGINT", () => void shutdown());
process.on("SIGTERM", () => void shutdown());
