/**
 * Runs on the Redis queue (RUNNEL_QUEUE=redis) with two queue worker processes
 * (`worker/main.ts`, BullMQ's sandboxed processor) against a private
 * redis-server, posting results to the app's worker routes over HTTP (served
 * from this process by tests/helpers/route-server.ts): a chunked run completes;
 * a worker killed mid-chunk (SIGKILL) loses nothing and stores nothing twice;
 * cancel stops running chunks and drops waiting ones; Redis stopped mid-run
 * answers 503 to a new run while finished runs stay readable, and the run
 * resumes when Redis is back. The worker API refuses wrong and revoked tokens
 * and posts outside a chunk's hand-out.
 *
 * The RUNNEL_TEST_FAULTS "slow" hook (25 ms a point) keeps runs going long
 * enough to act on them; the physics is checked elsewhere (runs-api,
 * run-chunks): here the probe values only have to come back unchanged.
 */
import { spawn, type ChildProcess } from "node:child_process";
import { asc, count, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import type { DB } from "@/db";
import { runChunks, runPointExpectations, runPoints, runs } from "@/db/schema";
import { secretHash } from "@/app/lib/secrets";
import { redisServerPath, startRedis, type PrivateRedis } from "@/scripts/lib/redis";
import { buildAccountsFixture, type AccountsFixture } from "../helpers/accounts";
import { apiCaller } from "../helpers/api";
import { startRouteServer, WORKER_ROUTES } from "../helpers/route-server";
import { pairSweep } from "../helpers/pair-sweep";
import { emptyChunkStats } from "@/app/lib/run-stats";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const SWEEP = pairSweep;

const TOKENS = { a: "runnel_worker_test-a-" + "a".repeat(30), b: "runnel_worker_test-b-" + "b".repeat(30) };
const hasRedis = redisServerPath() !== null;
if (!hasRedis) console.warn("run-redis tests skipped: redis-server is not installed (apt-get install redis-server)");

let fixture: AccountsFixture;
let db: DB;
let call: ReturnType<typeof apiCaller>;
let redis: PrivateRedis;
let server: { url: string; close(): Promise<void> };
let supervisor: typeof import("@/app/lib/run-supervisor");
const workers = new Map<string, ChildProcess>();

type RunJson = { id: string; state: string; reason: string | null; pointsDone: number; pointsTotal: number };

function startWorker(name: string, token = TOKENS[name as keyof typeof TOKENS]): Promise<ChildProcess> {
  const child = spawn(
    process.execPath,
    [
      "--import",
      "tsx",
      "worker/main.ts",
      "--app",
      server.url,
      "--token",
      token,
      "--redis",
      redis.url,
      "--threads",
      "1",
    ],
    { env: { ...process.env, RUNNEL_TEST_FAULTS: "1" }, stdio: ["ignore", "pipe", "pipe"] },
  );
  workers.set(name, child);
  let out = "";
  child.stderr!.on("data", (d) => {
    out += d.toString();
    if (process.env.RUNNEL_TEST_VERBOSE) process.stderr.write(`[worker ${name}] ${d}`);
  });
  return new Promise((resolve, reject) => {
    child.stdout!.on("data", (d) => {
      if (d.toString().includes("solving chunks")) resolve(child);
    });
    child.once("exit", (code) => reject(new Error(`worker ${name} exited (${code}): ${out}`)));
  });
}

beforeAll(async () => {
  if (!hasRedis) return;
  redis = await startRedis();
  process.env.RUNNEL_QUEUE = "redis";
  process.env.REDIS_URL = redis.url;
  process.env.RUNNEL_TEST_FAULTS = "1";
  process.env.RUNNEL_WORKER_TOKEN_HASHES = `${secretHash(TOKENS.a)},${secretHash(TOKENS.b)}`;
  fixture = buildAccountsFixture();
  db = fixture.useCopy();
  call = apiCaller(fixture);
  supervisor = await import("@/app/lib/run-supervisor");
  server = await startRouteServer(WORKER_ROUTES);
  await Promise.all([startWorker("a"), startWorker("b")]);
});

afterAll(async () => {
  if (!hasRedis) return;
  for (const w of workers.values()) if (w.exitCode === null) w.kill("SIGKILL");
  await supervisor.closePool();
  await server.close();
  await redis.stop();
  fixture.dispose();
  for (const k of ["RUNNEL_QUEUE", "REDIS_URL", "RUNNEL_TEST_FAULTS", "RUNNEL_WORKER_TOKEN_HASHES"])
    delete process.env[k];
});

async function newCommit(name: string, text: string): Promise<string> {
  const r = await call(
    "designer",
    "w/[slug]/networks/route",
    "POST",
    "/api/w/lm64-edge-row/networks",
    {
      slug: "lm64-edge-row",
    },
    { name, text, message: "test" },
  );
  expect(r.status).toBe(201);
  return (r.json as { commit: { id: string } }).commit.id;
}

const startRun = (body: Record<string, unknown>) => call("designer", "runs/route", "POST", "/api/runs", {}, body);
const runRow = (id: string) => db.select().from(runs).where(eq(runs.id, id)).get()!;
const chunksOf = (id: string) =>
  db.select().from(runChunks).where(eq(runChunks.runId, id)).orderBy(asc(runChunks.chunk)).all();
const storedPoints = (id: string) => db.select({ n: count() }).from(runPoints).where(eq(runPoints.runId, id)).get()!.n;

/** A slowed run of a new network `name` (a SWEEP of `points`), once more than `after` of its points are stored: its id. */
async function slowRunUnderWay(name: string, points: number, after = 20): Promise<string> {
  const r = await startRun({ commit: await newCommit(name, SWEEP(points)), fault: "slow" });
  const id = (r.json as { run: RunJson }).run.id;
  await until(
    "points",
    () => storedPoints(id),
    (n) => n > after,
  );
  return id;
}

async function until<T>(what: string, get: () => T, ok: (x: T) => boolean, ms = 60_000): Promise<T> {
  const end = Date.now() + ms;
  for (;;) {
    const x = get();
    if (ok(x)) return x;
    if (Date.now() > end) throw new Error(`${what}: still ${JSON.stringify(x)} after ${ms} ms`);
    await new Promise((f) => setTimeout(f, 50));
  }
}
const ended = (r: { state: string }) => !["queued", "running"].includes(r.state);

describe.skipIf(!hasRedis)("runs on the Redis queue with two worker processes", () => {
  it("solves a chunked run on both workers and stores every point once", async () => {
    const commit = await newCommit("Queue sweep", SWEEP(200));
    const r = await startRun({ commit, fault: "slow" });
    expect(r.status).toBe(201);
    const id = (r.json as { run: RunJson }).run.id;
    const done = await until("run", () => runRow(id), ended);
    if (process.env.RUNNEL_TEST_VERBOSE) {
      const row = runRow(id);
      const t = (d: Date | null) => (d ? d.getTime() - row.createdAt.getTime() : null);
      console.log(`run: started +${t(row.startedAt)} ms, finished +${t(row.finishedAt)} ms`);
      for (const c of chunksOf(id))
        console.log(`chunk ${c.chunk}: claimed +${t(c.claimedAt)} finished +${t(c.finishedAt)} by ${c.workerTokenId}`);
    }
    expect(done).toMatchObject({ state: "done", pointsDone: 200, reason: null });
    expect(storedPoints(id)).toBe(200);
    const chunks = chunksOf(id);
    expect(chunks.length).toBeGreaterThanOrEqual(4);
    expect(chunks.every((c) => c.state === "done")).toBe(true);
    // Both workers took chunks (each has its own operator token).
    const holders = new Set(chunks.map((c) => c.workerTokenId));
    expect(holders).toEqual(
      new Set([`operator:${secretHash(TOKENS.a).slice(0, 12)}`, `operator:${secretHash(TOKENS.b).slice(0, 12)}`]),
    );
    // The stored probe is the pair's current ratio, below 1 for dv < 0 and above for dv > 0.
    const series = await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${id}/results?view=series`, {
      id,
    });
    const probe = (series.json as { series: { probeValues: number[][] } }).series.probeValues[0];
    expect(probe).toHaveLength(200);
    expect(probe[0]).toBeLessThan(1);
    expect(probe[199]).toBeGreaterThan(1);
  });

  it("carries each solved point's verdicts in the workers' posts, stored as the in-process pool stores them", async () => {
    // The pair's ratio passes only for |dv| below about 10 mV (ratio = exp(κ·dv/U_T), κ ≈ 0.7, U_T ≈ 25.9 mV).
    const text =
      SWEEP(60) + "expect ratio_band = 0.75 <= ratio <= 1.33\nexpect pair_saturated = saturated devices=m*\n";
    const commit = await newCommit("Queue expectations", text);
    const r = await startRun({ commit, fault: "slow" });
    expect(r.status).toBe(201);
    const id = (r.json as { run: RunJson }).run.id;
    expect(await until("run", () => runRow(id), ended)).toMatchObject({ state: "done", pointsDone: 60 });
    // The same network in-process, point by point (app/lib/run-chunk.ts, as the piscina pool runs it).
    const { elaborate } = await import("@/src/lang/index");
    const { layoutOf } = await import("@/app/lib/results");
    const { solveChunk, STOP_NONE } = await import("@/app/lib/run-chunk");
    const { runExpectations } = await import("@/app/lib/run-expectations");
    const net = elaborate(text).network!;
    const layout = layoutOf(net);
    const local: { point: number; passed: number[]; margins: number[] }[] = [];
    solveChunk(
      net,
      layout,
      { start: 0, end: 60 },
      {
        stop: () => STOP_NONE,
        onBatch: (ps) => {
          for (const p of ps)
            local.push({ point: p.point, passed: [...p.expectations!.passed], margins: [...p.expectations!.margins] });
        },
      },
    );
    const stored = db
      .select()
      .from(runPointExpectations)
      .where(eq(runPointExpectations.runId, id))
      .orderBy(asc(runPointExpectations.point))
      .all()
      .map((x) => ({
        point: x.point,
        passed: [...new Uint8Array(x.passed)],
        margins: [...new Float64Array(x.margins.buffer.slice(x.margins.byteOffset, x.margins.byteOffset + 16))],
      }));
    expect(stored).toEqual(local);
    const summary = runRow(id).expectations!;
    expect(summary).toEqual(runExpectations(id, layout, 60, db));
    expect(summary.map((x) => [x.name, x.passed])).toEqual([
      ["ratio_band", false],
      ["pair_saturated", true],
    ]);
    expect(summary[0].pointsPassed).toBeGreaterThan(0);
    expect(summary[0].pointsPassed).toBeLessThan(60);
    expect(runRow(id).expectationsFailing).toBe(1);
  });

  it("hands a chunk of a worker killed mid-chunk to the other worker; every point is stored once", async () => {
    const commit = await newCommit("Kill a worker", SWEEP(400));
    const r = await startRun({ commit, fault: "slow" });
    const id = (r.json as { run: RunJson }).run.id;
    const victim = `operator:${secretHash(TOKENS.a).slice(0, 12)}`;
    const held = await until(
      "a chunk of worker a with points stored",
      () => chunksOf(id).find((c) => c.state === "running" && c.workerTokenId === victim),
      (c) => c !== undefined && storedPoints(id) > 0,
    );
    workers.get("a")!.kill("SIGKILL");
    const killedAt = Date.now();
    const done = await until("run", () => runRow(id), ended, 90_000);
    expect(done).toMatchObject({ state: "done", pointsDone: 400 });
    expect(storedPoints(id)).toBe(400);
    const again = chunksOf(id).find((c) => c.chunk === held!.chunk)!;
    expect(again.attempts).toBeGreaterThanOrEqual(2);
    expect(again.workerTokenId).not.toBe(victim);
    console.log(
      `run-redis: the killed worker's chunk was solved again; the run ended ${Date.now() - killedAt} ms after the kill`,
    );
    await startWorker("a");
  });

  it("cancel stops the running chunks and drops the waiting ones", async () => {
    const id = await slowRunUnderWay("Cancel on the queue", 400);
    const c = await call("designer", "runs/[id]/cancel/route", "POST", `/api/runs/${id}/cancel`, { id });
    expect(c.status).toBe(200);
    const t0 = Date.now();
    const run = await until("run", () => runRow(id), ended, 20_000);
    expect(run.state).toBe("canceled");
    expect(run.reason).toBe(`canceled after ${run.pointsDone} of 400 points`);
    expect(run.pointsDone).toBeLessThan(400);
    expect(Date.now() - t0).toBeLessThan(15_000);
    // No chunk of it is left on the queue.
    const { Queue } = await import("bullmq");
    const q = new Queue("runnel-chunks", { connection: { url: redis.url } });
    await until(
      "queue",
      async () => 0,
      () => true,
    );
    const counts = await q.getJobCounts("waiting", "prioritized", "active", "delayed");
    await q.close();
    expect(counts.waiting + counts.prioritized + counts.delayed).toBe(0);
    expect(chunksOf(id).some((x) => x.state === "stopped" || x.state === "queued")).toBe(true);
  });

  it("revoking a workspace worker's token mid-run: the worker is refused and stops, and the run ends on the operator's workers within 30 s, every point once", async () => {
    const made = await call(
      "owner",
      "w/[slug]/worker-tokens/route",
      "POST",
      "/api/w/lm64-edge-row/worker-tokens",
      { slug: "lm64-edge-row" },
      { name: "bench machine" },
    );
    expect(made.status).toBe(201);
    const { id: tokenId, token } = (made.json as { token: { id: string; token: string } }).token;
    const lab = await startWorker("c", token);
    try {
      // The workspace has a live worker of its own (its hello), so its runs go to its own queue.
      const commit = await newCommit("Revoke a worker", SWEEP(400));
      const r = await startRun({ commit, fault: "slow" });
      const id = (r.json as { run: RunJson }).run.id;
      await until(
        "points from the workspace's worker",
        () => chunksOf(id).filter((c) => c.workerTokenId === tokenId).length > 0 && storedPoints(id),
        (n) => typeof n === "number" && n > 10,
      );
      const gone = await call(
        "owner",
        "w/[slug]/worker-tokens/[id]/route",
        "DELETE",
        `/api/w/lm64-edge-row/worker-tokens/${tokenId}`,
        { slug: "lm64-edge-row", id: tokenId },
      );
      expect(gone.status).toBe(204);
      const revokedAt = Date.now();
      const hello = await fetch(server.url + "/api/worker/hello", { headers: { authorization: `Bearer ${token}` } });
      expect(hello.status).toBe(401);
      const run = await until("run", () => runRow(id), ended, 90_000);
      expect(run).toMatchObject({ state: "done", pointsDone: 400 });
      expect(storedPoints(id)).toBe(400);
      console.log(`run-redis: the run ended ${Date.now() - revokedAt} ms after its worker's token was revoked`);
      expect(Date.now() - revokedAt).toBeLessThan(30_000);
      // The refused worker stops taking chunks and exits with status 1.
      await until(
        "the refused worker's exit",
        () => lab.exitCode,
        (code) => code !== null,
        30_000,
      );
      expect(lab.exitCode).toBe(1);
    } finally {
      lab.kill("SIGKILL");
    }
  }, 120_000);

  it("with Redis stopped: a new run answers 503 at once, finished runs read, and the running run resumes when it is back", async () => {
    const done = db.select({ id: runs.id }).from(runs).where(eq(runs.state, "done")).get()!;
    const id = await slowRunUnderWay("Redis goes away", 300);
    await redis.stop();
    const t0 = Date.now();
    const refused = await startRun({ commit: runRow(id).commitId });
    expect(refused.status).toBe(503);
    expect(refused.json.error).toMatch(/the run queue \(Redis\) is not reachable/);
    expect(Date.now() - t0).toBeLessThan(1_500);
    const read = await call("viewer", "runs/[id]/route", "GET", `/api/runs/${done.id}`, { id: done.id });
    expect(read.status).toBe(200);
    redis = await startRedis({ port: redis.port });
    const run = await until("run", () => runRow(id), ended, 90_000);
    expect(run).toMatchObject({ state: "done", pointsDone: 300 });
    expect(storedPoints(id)).toBe(300);
  });
});

describe.skipIf(!hasRedis)("the worker API refuses", () => {
  const worker = (token: string | null, path: string, init: RequestInit = {}) =>
    fetch(server.url + path, {
      ...init,
      headers: { ...(token ? { authorization: `Bearer ${token}` } : {}), ...init.headers },
    });

  it("a missing, wrong or revoked token with 401, and a session cookie does not count", async () => {
    expect((await worker(null, "/api/worker/hello")).status).toBe(401);
    expect((await worker("runnel_worker_" + "x".repeat(43), "/api/worker/hello")).status).toBe(401);
    expect((await worker(fixture.actors.owner!.token, "/api/worker/hello")).status).toBe(401);
    const cookie = await fetch(server.url + "/api/worker/hello", { headers: { cookie: fixture.actors.owner!.cookie } });
    expect(cookie.status).toBe(401);
    // A workspace token made by the owner works until it is revoked.
    const made = await call(
      "owner",
      "w/[slug]/worker-tokens/route",
      "POST",
      "/api/w/lm64-edge-row/worker-tokens",
      {
        slug: "lm64-edge-row",
      },
      { name: "lab machine" },
    );
    expect(made.status).toBe(201);
    const { id, token } = (made.json as { token: { id: string; token: string } }).token;
    const hello = await worker(token, "/api/worker/hello");
    expect(hello.status).toBe(200);
    expect(((await hello.json()) as { queue: string }).queue).toBe("runnel-chunks-ws_lm64");
    const gone = await call(
      "owner",
      "w/[slug]/worker-tokens/[id]/route",
      "DELETE",
      `/api/w/lm64-edge-row/worker-tokens/${id}`,
      {
        slug: "lm64-edge-row",
        id,
      },
    );
    expect(gone.status).toBe(204);
    expect((await worker(token, "/api/worker/hello")).status).toBe(401);
  });

  it("points outside the chunk, of the wrong layout, or from a stale hand-out; nothing of such a batch is stored", async () => {
    const { encodeBatch } = await import("@/app/lib/run-wire");
    const { insertRun } = await import("@/app/lib/runs");
    const { getCommit } = await import("@/app/lib/networks");
    const { planRun } = await import("@/app/lib/run-plan");
    const { storedLayout } = await import("@/app/lib/run-layouts");
    const { elaborate } = await import("@/src/lang/index");
    const commit = await newCommit("Forged posts", SWEEP(10));
    const c = getCommit(commit, db)!;
    const plan = planRun(elaborate(c.text).network!, 1);
    // Stored, not queued: only this test's calls hand its chunks out.
    const id = insertRun(
      {
        commitId: commit,
        networkId: c.networkId,
        createdBy: "u_designer1",
        pointsTotal: 10,
        timeLimitMs: 60_000,
        layout: storedLayout(plan.layout),
        model: plan.model,
        chunks: [
          { start: 0, end: 5 },
          { start: 5, end: 10 },
        ],
      },
      db,
    );
    const json = (token: string, path: string, body: unknown) =>
      worker(token, path, {
        method: "POST",
        headers: { "content-type": "application/json" },
        body: JSON.stringify(body),
      });
    const claimed = await json(TOKENS.a, "/api/worker/claims", { runId: id, chunk: 0 });
    expect(claimed.status).toBe(200);
    const claim = ((await claimed.json()) as { claim: { attempt: number; counts: Record<string, number> } }).claim;
    expect(claim.attempt).toBe(1);
    const counts = claim.counts as { nodes: number; rails: number; probes: number; params: number; devices: number };
    const point = (k: number, n = counts) => ({
      point: k,
      sample: 0,
      method: "linear" as const,
      iterations: 1,
      residual: 0,
      error: null,
      nodes: new Float64Array(n.nodes),
      rails: new Float64Array(n.rails),
      probes: new Float64Array(n.probes),
      params: new Float64Array(n.params),
      current: new Float64Array(n.devices),
      ic: new Float32Array(n.devices),
      saturated: new Uint8Array(n.devices),
    });
    const post = (token: string, attempt: number, body: Uint8Array, chunk = 0) =>
      worker(token, `/api/worker/chunks/${id}/${chunk}/points?attempt=${attempt}`, {
        method: "POST",
        headers: { "content-type": "application/octet-stream" },
        body: body as Uint8Array<ArrayBuffer>,
      });
    // A point of chunk 1 in chunk 0's batch (with a good one before it): 422, and neither is stored.
    const outside = await post(TOKENS.a, 1, encodeBatch([point(1), point(7)], counts));
    expect(outside.status).toBe(422);
    expect(((await outside.json()) as { error: string }).error).toBe("point 7: outside the chunk's points 0–4");
    // Arrays not of the run's layout.
    const wrong = await post(
      TOKENS.a,
      1,
      encodeBatch([point(2, { ...counts, nodes: counts.nodes + 1 })], { ...counts, nodes: counts.nodes + 1 }),
    );
    expect(wrong.status).toBe(422);
    expect(((await wrong.json()) as { error: string }).error).toMatch(
      /^point 2: nodes has 6 values; the run's layout has 5/,
    );
    // Verdicts for a network that states no expectations.
    const verdicts = { passed: new Uint8Array([1]), margins: new Float64Array([0.5]) };
    const extra = await post(TOKENS.a, 1, encodeBatch([{ ...point(2), expectations: verdicts }], counts));
    expect(extra.status).toBe(422);
    expect(((await extra.json()) as { error: string }).error).toBe("point 2: verdicts sent for a point that has none");
    // Garbage.
    expect((await post(TOKENS.a, 1, new Uint8Array([1, 2, 3, 4, 5, 6, 7]))).status).toBe(422);
    // The other worker's token, a wrong attempt, a chunk not handed out.
    expect((await post(TOKENS.b, 1, encodeBatch([point(1)], counts))).status).toBe(409);
    expect((await post(TOKENS.a, 2, encodeBatch([point(1)], counts))).status).toBe(409);
    expect((await post(TOKENS.a, 1, encodeBatch([point(6)], counts), 1)).status).toBe(409);
    expect(storedPoints(id)).toBe(0);
    // The good batch is stored, and a repeat of it stores nothing twice.
    const ok = await post(TOKENS.a, 1, encodeBatch([point(0), point(1)], counts));
    expect(ok.status).toBe(200);
    expect(await ok.json()).toEqual({ stored: 2, stop: 0 });
    expect(await (await post(TOKENS.a, 1, encodeBatch([point(0), point(1)], counts))).json()).toEqual({
      stored: 0,
      stop: 0,
    });
    // Handed out again (a lost worker), the old hand-out's posts are refused.
    expect((await json(TOKENS.b, "/api/worker/claims", { runId: id, chunk: 0 })).status).toBe(200);
    expect((await post(TOKENS.a, 1, encodeBatch([point(2)], counts))).status).toBe(409);
    // "done" with points missing is refused.
    const end = await json(TOKENS.b, `/api/worker/chunks/${id}/0/end`, {
      outcome: "done",
      attempt: 2,
      stats: { ...emptyChunkStats(), points: 5 },
      flags: Buffer.alloc(2).toString("base64"),
    });
    expect(end.status).toBe(409);
    expect(((await end.json()) as { error: string }).error).toBe("only 2 of the chunk's 5 points are stored");
    expect(storedPoints(id)).toBe(2);
    expect(runRow(id).pointsDone).toBe(2);
    (await import("@/app/lib/runs")).finishRun(id, "canceled", "the test is over", db);
  });
});
