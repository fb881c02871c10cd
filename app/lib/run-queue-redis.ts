/**
 * The Redis run queue (RUNNEL_QUEUE=redis, REDIS_URL): BullMQ on Redis, with
 * queue workers (`npm run worker`, any machine) that solve chunks and post
 * their results to the app over HTTP (app/lib/run-ingest.ts); SQLite stays on
 * the app host.
 *
 * - The fair queue (app/lib/fair-queue.ts) admits runs as for the local pool;
 *   an admitted run becomes a BullMQ flow: a parent job `run` (queue
 *   runnel-runs, processed here: it ends the run from its chunks) with one
 *   child job per open chunk, whose priority is the chunk's fair-queue tag.
 *   Children have `ignoreDependencyOnFailure`, so a lost chunk never blocks
 *   the parent; the parent then finds the chunk open and queues the run's open
 *   chunks again as a new flow (a new generation), at most MAX_GENERATIONS times.
 * - Chunks go to the queue of the run's workspace when that workspace has a
 *   worker of its own (a workspace worker token seen in the last two minutes),
 *   else to the shared queue served by operator-token workers.
 * - Workers hold a chunk's lock for LOCK_MS and renew it; a worker that dies
 *   mid-chunk is noticed by the stalled-job check (every STALLED_MS) and the
 *   chunk goes to another worker (about 5–15 s), which solves it again; the
 *   points are stored once.
 * - Stop (cancel, time limit, a failed chunk): waiting chunk jobs are removed,
 *   workers are told through a queue event (their processors take the abort
 *   signal) and through the answer to their next post.
 * - The app's connection has no offline queue and fails fast: with Redis down,
 *   starting a run answers 503 at once and reading runs works. When Redis
 *   comes back (or the app starts), every running run whose flow is gone gets
 *   its open chunks queued again: it resumes.
 */
import type { FlowProducer, Job, Queue, QueueEventsProducer, Worker } from "bullmq";
import type { Redis } from "ioredis";
import { db } from "@/db";
import { runChunks, runs } from "@/db/schema";
import { and, asc, eq, inArray } from "drizzle-orm";
import { FairQueue, type TaggedChunk } from "./fair-queue";
import { CHUNKS_QUEUE, RUNS_QUEUE, STOP_EVENT, workspaceQueue } from "./queue-protocol";
import { RequestError } from "./http";
import { finalizeInPool, formatSeconds, runsPerWorkspace, STOP_GRACE_MS, workerMessage } from "./run-pool";
import { finishRun, openChunksOf, runDispatchInfo } from "./runs";
import type { TestFault } from "./run-chunk";
import { workspaceHasLiveWorker } from "./worker-tokens";

const CHUNK_ATTEMPTS = 5;
const MAX_GENERATIONS = 4;
/** BullMQ's largest priority. */
const MAX_PRIORITY = 2_097_151;

interface LiveRun {
  id: string;
  gen: number;
  queue: string;
  /** The flow of this generation is in Redis. */
  queued: boolean;
  /** A flow is being added (reconcile leaves the run alone meanwhile). */
  adding: boolean;
  timers: NodeJS.Timeout[];
  finalizing: boolean;
}

interface State {
  url: string;
  conn: Redis;
  blocking: Redis;
  flows: FlowProducer;
  runsQueue: Queue;
  queues: Map<string, Queue>;
  events: Map<string, QueueEventsProducer>;
  parent: Worker;
  fq: FairQueue;
  live: Map<string, LiveRun>;
  faults: Map<string, TestFault>;
  idleWaiters: (() => void)[];
  wasDown: boolean;
  reconciling: boolean;
  bullmq: typeof import("bullmq");
}

const KEY = Symbol.for("runnel.runs.redis");
const g = globalThis as unknown as Record<symbol, Promise<State> | undefined>;

/** The queue's connection, made on first use (the server makes it at start-up). */
export function redisQueue(): Promise<State> {
  return (g[KEY] ??= open());
}

async function open(): Promise<State> {
  const url = process.env.REDIS_URL;
  if (!url) throw new RequestError(503, "RUNNEL_QUEUE=redis needs REDIS_URL (e.g. redis://127.0.0.1:6379)");
  const bullmq = await import("bullmq");
  const { Redis } = await import("ioredis");
  // Fail fast while Redis is away: no offline queue, one retry per command (BullMQ's workers use `blocking`).
  const conn = new Redis(url, { enableOfflineQueue: false, maxRetriesPerRequest: 1, lazyConnect: false });
  const blocking = new Redis(url, { maxRetriesPerRequest: null });
  const quiet = (what: string) => (e: Error) => {
    if (!/ECONNREFUSED|ECONNRESET|Connection is closed|Stream isn't writeable/.test(e.message))
      console.error(`runnel: Redis ${what}: ${e.message}`);
  };
  conn.on("error", quiet("connection"));
  blocking.on("error", quiet("connection"));
  // BullMQ objects wait for the connection before their first command; runnel calls them only while it is
  // ready (`up`), so nothing ever waits on a Redis that is away.
  const opts = { connection: conn };
  const flows = new bullmq.FlowProducer(opts);
  flows.on("error", quiet("flow producer"));
  const runsQueue = new bullmq.Queue(RUNS_QUEUE, opts);
  runsQueue.on("error", quiet("queue"));
  const s: State = {
    url,
    conn,
    blocking,
    flows,
    runsQueue,
    queues: new Map(),
    events: new Map(),
    parent: null as unknown as Worker,
    fq: new FairQueue(runsPerWorkspace, false),
    live: new Map(),
    faults: new Map(),
    idleWaiters: [],
    wasDown: false,
    reconciling: false,
    bullmq,
  };
  s.parent = new bullmq.Worker(RUNS_QUEUE, (job: Job) => parentJob(s, job), {
    connection: blocking,
    concurrency: 4,
    lockDuration: 30_000,
  });
  s.parent.on("error", quiet("worker"));
  conn.on("close", () => {
    s.wasDown = true;
  });
  conn.on("ready", () => {
    if (!s.wasDown) return;
    s.wasDown = false;
    void reconcile(s, true);
  });
  // Runs whose flow could not be added (Redis went away in between) are tried again.
  setInterval(() => void reconcile(s, false), 2_000).unref();
  return s;
}

/** Throws unless the connection is ready (a BullMQ call now would wait for it). */
function up(s: State): void {
  if (s.conn.status !== "ready") throw new Error(`Redis at ${s.url} is not connected (${s.conn.status})`);
}

/** Whether Redis answers now; waits up to `ms` for a connection that is still being made. */
export async function redisReady(ms = 1_000): Promise<boolean> {
  const s = await redisQueue();
  if (s.conn.status === "ready") return true;
  if (s.conn.status !== "connecting" && s.conn.status !== "connect" && s.conn.status !== "wait") return false;
  await new Promise<void>((resolve) => {
    const t = setTimeout(resolve, ms);
    s.conn.once("ready", () => {
      clearTimeout(t);
      resolve();
    });
  });
  return (s.conn.status as string) === "ready";
}

/** 503 unless Redis answers. */
export async function assertQueueUp(): Promise<void> {
  if (!(await redisReady(300)))
    throw new RequestError(
      503,
      "the run queue (Redis) is not reachable, so runs cannot start now; try again in a minute. Finished runs can still be read.",
    );
}

function queueOf(s: State, name: string): Queue {
  let q = s.queues.get(name);
  if (!q) {
    q = new s.bullmq.Queue(name, { connection: s.conn });
    q.on("error", () => undefined);
    s.queues.set(name, q);
  }
  return q;
}

function eventsOf(s: State, name: string): QueueEventsProducer {
  let e = s.events.get(name);
  if (!e) {
    e = new s.bullmq.QueueEventsProducer(name, { connection: s.conn });
    e.on("error", () => undefined);
    s.events.set(name, e);
  }
  return e;
}

/** Queues a run whose chunks are stored; `chunks` are the indices still to solve. */
export async function enqueueRedis(
  run: { id: string; workspaceId: string; chunks: number[] },
  fault?: TestFault,
): Promise<void> {
  const s = await redisQueue();
  if (fault) s.faults.set(run.id, fault);
  await admit(s, s.fq.add(run));
}

export async function faultOf(runId: string): Promise<TestFault | undefined> {
  return (await redisQueue()).faults.get(runId);
}

/** Turns admitted chunks into flows, one per run. */
async function admit(s: State, chunks: TaggedChunk[]): Promise<void> {
  const byRun = new Map<string, TaggedChunk[]>();
  for (const c of chunks) byRun.set(c.runId, [...(byRun.get(c.runId) ?? []), c]);
  for (const [runId, list] of byRun) {
    const info = runDispatchInfo(runId);
    if (!info) continue;
    const live: LiveRun = s.live.get(runId) ?? {
      id: runId,
      gen: 0,
      queue: "",
      queued: false,
      adding: false,
      timers: [],
      finalizing: false,
    };
    live.queue = workspaceHasLiveWorker(info.workspaceId) ? workspaceQueue(info.workspaceId) : CHUNKS_QUEUE;
    s.live.set(runId, live);
    await addFlow(s, live, list);
  }
}

/** Adds the flow of a run's next generation; on failure the run waits for Redis (reconcile). */
async function addFlow(s: State, live: LiveRun, chunks: TaggedChunk[]): Promise<void> {
  const ranges = db()
    .select({ chunk: runChunks.chunk, start: runChunks.start, end: runChunks.end })
    .from(runChunks)
    .where(
      and(
        eq(runChunks.runId, live.id),
        inArray(
          runChunks.chunk,
          chunks.map((c) => c.chunk),
        ),
      ),
    )
    .orderBy(asc(runChunks.chunk))
    .all();
  const tags = new Map(chunks.map((c) => [c.chunk, c.tag]));
  live.gen++;
  live.queued = false;
  live.adding = true;
  const gen = live.gen;
  try {
    up(s);
    // The tags (virtual times) are kept with the chunks, so that a restarted app can continue the clock.
    for (const c of chunks)
      db()
        .update(runChunks)
        .set({ tag: c.tag })
        .where(and(eq(runChunks.runId, live.id), eq(runChunks.chunk, c.chunk)))
        .run();
    await s.flows.add({
      name: "run",
      queueName: RUNS_QUEUE,
      data: { runId: live.id, gen, queue: live.queue },
      opts: { jobId: `${live.id}.g${gen}`, removeOnComplete: true, removeOnFail: true },
      children: ranges.map((r) => ({
        name: "chunk",
        queueName: live.queue,
        data: { runId: live.id, chunk: r.chunk, start: r.start, end: r.end, gen },
        opts: {
          jobId: chunkJobId(live.id, gen, r.chunk),
          priority: Math.min(MAX_PRIORITY, Math.max(1, tags.get(r.chunk) ?? 1)),
          ignoreDependencyOnFailure: true,
          attempts: CHUNK_ATTEMPTS,
          backoff: { type: "exponential", delay: 1_000 },
          removeOnComplete: true,
          removeOnFail: true,
        },
      })),
    });
    live.queued = true;
    debug(`flow ${live.id} g${gen}: ${ranges.length} chunks on ${live.queue}`);
  } catch (e) {
    console.warn(`runnel: run ${live.id} waits for the queue: ${(e as Error).message}`);
  } finally {
    live.adding = false;
  }
}

function debug(m: string): void {
  if (process.env.RUNNEL_QUEUE_DEBUG) console.log(`runnel queue: ${m}`);
}

const chunkJobId = (runId: string, gen: number, chunk: number) => `${runId}.g${gen}.c${chunk}`;

/** The parent job: every chunk job of a generation has ended. */
async function parentJob(s: State, job: Job): Promise<void> {
  const { runId, gen } = job.data as { runId: string; gen: number };
  const live = s.live.get(runId);
  debug(`parent ${runId} g${gen}: live g${live?.gen} finalizing ${live?.finalizing}`);
  if (!live || live.gen !== gen || live.finalizing) return;
  await finalize(s, live);
}

async function finalize(s: State, live: LiveRun, forced?: { state: "failed" | "canceled"; reason: string }) {
  live.finalizing = true;
  let r;
  try {
    r = await finalizeInPool(live.id, forced);
  } catch (e) {
    finishRun(live.id, forced?.state ?? "failed", forced?.reason ?? `the run failed: ${workerMessage(e)}`);
    r = "ended" as const;
  }
  if (r === null) {
    // A chunk is still open with no stop request: its jobs were lost (a worker gave up, Redis lost them). Again.
    live.finalizing = false;
    const open = openChunksOf(live.id);
    if (live.gen >= MAX_GENERATIONS) {
      finishRun(
        live.id,
        "failed",
        `the run failed: ${open.length} chunk(s) could not be completed after ${live.gen} tries on the queue`,
      );
    } else {
      // Route the new generation afresh: the workspace's own worker may be gone (its token revoked, the machine
      // stopped), and its chunks must then go to the shared queue rather than back to it.
      const info = runDispatchInfo(live.id);
      if (info) live.queue = workspaceHasLiveWorker(info.workspaceId) ? workspaceQueue(info.workspaceId) : CHUNKS_QUEUE;
      await addFlow(
        s,
        live,
        open.map((chunk) => ({ runId: live.id, chunk, tag: 1 })),
      );
      return;
    }
  }
  ended(s, live.id);
}

function ended(s: State, runId: string): void {
  const live = s.live.get(runId);
  if (live) for (const t of live.timers) clearTimeout(t);
  s.live.delete(runId);
  s.faults.delete(runId);
  void admit(s, s.fq.ended(runId));
  if (s.live.size === 0 && s.fq.size === 0) s.idleWaiters.splice(0).forEach((f) => f());
}

/** A worker took a chunk: the fair clock moves; the run's first chunk starts its time-limit backstop. */
export async function noteClaim(runId: string, tag: number, deadline: number): Promise<void> {
  const s = await redisQueue();
  s.fq.advance(tag);
  const live = s.live.get(runId);
  if (!live || live.timers.length > 0) return;
  const info = runDispatchInfo(runId);
  const limit = info?.timeLimitMs ?? 0;
  live.timers.push(
    setTimeout(() => void stopRedis(runId), Math.max(0, deadline - Date.now())),
    setTimeout(
      () => {
        if (s.live.get(runId) === live && !live.finalizing)
          void finalize(s, live, {
            state: "failed",
            reason: `time limit of ${formatSeconds(limit)} reached; a worker did not stop`,
          });
      },
      Math.max(0, deadline - Date.now()) + 2 * STOP_GRACE_MS,
    ),
  );
}

/**
 * A run's stop request is in the database (cancel, time limit, failed chunk): drop its waiting chunk jobs and tell
 * the workers solving the others. The parent job ends the run once those have stopped.
 */
export async function stopRedis(runId: string): Promise<void> {
  const s = await redisQueue();
  const live = s.live.get(runId);
  if (!live) return;
  if (s.conn.status !== "ready") return;
  const q = queueOf(s, live.queue);
  const rows = db().select({ chunk: runChunks.chunk }).from(runChunks).where(eq(runChunks.runId, runId)).all();
  await Promise.all(rows.map((r) => q.remove(chunkJobId(runId, live.gen, r.chunk)).catch(() => 0)));
  await eventsOf(s, live.queue)
    .publishEvent({ eventName: STOP_EVENT, runId })
    .catch(() => undefined);
}

/** Cancels a run on the queue: "waiting" (never admitted: end it here), "live" (stopping), or "unknown". */
export async function cancelRedis(runId: string): Promise<"waiting" | "live" | "unknown"> {
  const s = await redisQueue();
  if (s.fq.isWaiting(runId)) {
    s.fq.drop(runId);
    return "waiting";
  }
  const live = s.live.get(runId);
  if (!live) return "unknown";
  await stopRedis(runId);
  live.timers.push(
    setTimeout(() => {
      if (s.live.get(runId) === live && !live.finalizing)
        void finalize(s, live, { state: "canceled", reason: "canceled (a worker did not stop)" });
    }, 2 * STOP_GRACE_MS),
  );
  // No chunk was handed out: nothing will end the parent job's wait but the removals above; end it here.
  const started = db().select({ startedAt: runs.startedAt }).from(runs).where(eq(runs.id, runId)).get()?.startedAt;
  if (!started && !live.finalizing) await finalize(s, live);
  return "live";
}

/**
 * Makes Redis hold what the database says is running or admitted: a run whose flow is gone (Redis restarted
 * without its data) gets its open chunks queued again; a run whose flow never got in is queued now.
 */
async function reconcile(s: State, all: boolean): Promise<void> {
  if (s.conn.status !== "ready" || s.reconciling) return;
  s.reconciling = true;
  try {
    await reconcileRuns(s, all);
  } catch (e) {
    console.warn(`runnel: could not check the queue's runs: ${(e as Error).message}`);
  } finally {
    s.reconciling = false;
  }
}

async function reconcileRuns(s: State, all: boolean): Promise<void> {
  for (const live of [...s.live.values()]) {
    if (live.finalizing || live.adding) continue;
    if (!all && live.queued) {
      if (live.queue !== CHUNKS_QUEUE) await rerouteIfOrphaned(s, live);
      continue;
    }
    if (live.gen === 0) {
      // Recovered at start-up: find the newest generation of its flow still in Redis.
      for (let gen = MAX_GENERATIONS; gen >= 1 && live.gen === 0; gen--) {
        const job = await s.runsQueue.getJob(`${live.id}.g${gen}`);
        if (job) Object.assign(live, { gen, queue: (job.data as { queue: string }).queue, queued: true });
      }
    }
    const parent = live.queued ? await s.runsQueue.getJob(`${live.id}.g${live.gen}`) : null;
    if (parent) {
      if (live.queue !== CHUNKS_QUEUE) await rerouteIfOrphaned(s, live);
      continue;
    }
    const open = openChunksOf(live.id);
    if (open.length === 0) await finalize(s, live);
    else {
      const info = runDispatchInfo(live.id);
      if (info && !live.queue)
        live.queue = workspaceHasLiveWorker(info.workspaceId) ? workspaceQueue(info.workspaceId) : CHUNKS_QUEUE;
      await addFlow(
        s,
        live,
        open.map((chunk) => ({ runId: live.id, chunk, tag: 1 })),
      );
    }
  }
}

/**
 * A run on its workspace's own queue whose workspace has no live worker any more (its token revoked, or not seen for
 * two minutes): its waiting chunks would wait for ever. Its generation is dropped and its open chunks are queued
 * again on the shared queue, served by the operator's workers; a chunk still held by the gone worker is refused at
 * its next post (401) and solved again here, its points stored once.
 */
async function rerouteIfOrphaned(s: State, live: LiveRun): Promise<void> {
  const info = runDispatchInfo(live.id);
  if (!info || workspaceHasLiveWorker(info.workspaceId)) return;
  debug(`reroute ${live.id} g${live.gen}: ${live.queue} has no live worker`);
  await s.runsQueue.remove(`${live.id}.g${live.gen}`, { removeChildren: true }).catch(() => 0);
  const q = queueOf(s, live.queue);
  const rows = db().select({ chunk: runChunks.chunk }).from(runChunks).where(eq(runChunks.runId, live.id)).all();
  await Promise.all(rows.map((r) => q.remove(chunkJobId(live.id, live.gen, r.chunk)).catch(() => 0)));
  live.queue = CHUNKS_QUEUE;
  const open = openChunksOf(live.id);
  if (open.length === 0) await finalize(s, live);
  else
    await addFlow(
      s,
      live,
      open.map((chunk) => ({ runId: live.id, chunk, tag: 1 })),
    );
}

/**
 * On start-up: running runs continue (their flows, or their open chunks queued again, once Redis answers) and
 * count against their workspace's cap; queued runs are queued again, oldest first.
 */
export async function recoverRedis(
  running: { id: string; workspaceId: string }[],
  queued: { id: string; workspaceId: string }[],
) {
  const s = await redisQueue();
  for (const r of running) {
    s.fq.add({ id: r.id, workspaceId: r.workspaceId, chunks: [] });
    s.live.set(r.id, { id: r.id, gen: 0, queue: "", queued: false, adding: false, timers: [], finalizing: false });
  }
  for (const r of queued) await enqueueRedis({ id: r.id, workspaceId: r.workspaceId, chunks: openChunksOf(r.id) });
  await reconcile(s, true);
}

export async function whenRedisIdle(): Promise<void> {
  const s = await redisQueue();
  if (s.live.size === 0 && s.fq.size === 0) return;
  return new Promise((resolve) => s.idleWaiters.push(resolve));
}

/** Closes the connections (tests, shutdown). */
export async function closeRedisQueue(): Promise<void> {
  const p = g[KEY];
  g[KEY] = undefined;
  if (!p) return;
  const s = await p.catch(() => null);
  if (!s) return;
  for (const live of s.live.values()) for (const t of live.timers) clearTimeout(t);
  await s.parent.close(true).catch(() => undefined);
  await Promise.all(
    [...s.queues.values(), ...s.events.values(), s.runsQueue, s.flows].map((q) => q.close().catch(() => undefined)),
  );
  s.conn.disconnect();
  s.blocking.disconnect();
}
