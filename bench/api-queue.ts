/**
 * Runs across cores and machines (`npm run bench:queue`): a gate-bias sweep and
 * a threshold-mismatch Monte Carlo on the 64 × 64 diffuser grid of
 * bench/workloads.ts (4,096 internal nodes, 12,160 devices), each started
 * through POST /api/runs on the production build and timed from the run's
 * created → finished timestamps, in three set-ups:
 *   local-1  the in-process pool with one thread (RUNNEL_RUN_THREADS=1)
 *   local-N  the in-process pool with a thread per core (the default)
 *   queue-2  RUNNEL_QUEUE=redis on a private redis-server, two queue worker
 *            processes (`npm run worker -- --threads 1`) posting over HTTP
 * Then, from the queue run's chunk rows: the time a worker spends between two
 * chunks (queue hand-out and claim) against a chunk's solving time. Last, the
 * app's ingestion rate: synthetic points of that grid posted by two clients as
 * queue workers do (binary batches to /api/worker/chunks/…/points) while ten
 * clients read the run (state and series every second).
 *
 * A point of this grid stores 40,589 values (about 190 KB), so a 10,000-point
 * run is about 1.9 GB: the bench lifts RUNNEL_MAX_VALUES for its own server.
 * Each set-up runs in a child process of its own with a fresh database.
 *
 * Needs `npm run build` first. Options: --points N (default 10000), --samples N
 * (default 2000), --ingest N points (default 2000), --port N (default 3321).
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import os from "node:os";
import Database from "better-sqlite3";
import { gridText } from "./workloads";
import { machineLine, numberOption, pause, startBenchServer } from "./api-server";

const argv = process.argv.slice(2);
const POINTS = numberOption(argv, "--points", 10_000);
const SAMPLES = numberOption(argv, "--samples", 2_000);
const INGEST = numberOption(argv, "--ingest", 2_000);
const PORT = numberOption(argv, "--port", 3321);
const SETUP = argv.includes("--setup") ? argv[argv.indexOf("--setup") + 1] : null;
const N = 64;
const LIMITS = { RUNNEL_MAX_VALUES: String(2_000_000_000), RUNNEL_MAX_POINTS: String(Math.max(20_000, POINTS)) };

const sweepText = (points: number) =>
  gridText(
    "bench_sweep",
    N,
    `probe centre = voltage(n${N / 2}_${N / 2})\nprobe edge = current(o0_0)\nsweep vh from 0.65 to 0.85 points ${points}\n`,
  );
const mismatchText = (samples: number) =>
  gridText("bench_mismatch", N, `probe edge = current(o0_0)\nmismatch runs ${samples} seed 1 avt 3m\n`);

interface RunFigures {
  wallS: number;
  points: number;
  chunks: number;
  /** Queue runs: mean time between a worker's chunks (ms) and a chunk's mean claim → end (ms). */
  gapMs?: number;
  chunkMs?: number;
}
interface SetupResult {
  setup: string;
  sweep: RunFigures;
  mismatch: RunFigures;
  ingest?: { pointsPerS: number; mbPerS: number; readP50: number; readP95: number; reads: number };
}

// ---------------------------------------------------------------- one set-up (child process)

async function runOne(setup: string): Promise<SetupResult> {
  const env: Record<string, string> = { ...LIMITS };
  let redis: { url: string; stop(): Promise<void> } | null = null;
  // One operator token per worker process, so each chunk row says which worker solved it.
  const TOKENS = ["runnel_worker_bench-" + "a".repeat(40), "runnel_worker_bench-" + "b".repeat(40)];
  if (setup === "local-1") env.RUNNEL_RUN_THREADS = "1";
  if (setup === "queue-2" || setup === "ingest") {
    const { startRedis } = await import("../scripts/lib/redis");
    const { secretHash } = await import("../app/lib/secrets");
    redis = await startRedis();
    Object.assign(env, {
      RUNNEL_QUEUE: "redis",
      REDIS_URL: redis.url,
      RUNNEL_WORKER_TOKEN_HASHES: TOKENS.map(secretHash).join(","),
    });
  }
  const server = await startBenchServer(`bench:queue ${setup}`, PORT, { env });
  const workers: ChildProcess[] = [];
  process.on("exit", () => workers.forEach((w) => w.kill("SIGKILL")));
  if (setup === "queue-2")
    for (let i = 0; i < 2; i++) {
      const w = spawn(
        process.execPath,
        [
          "--import",
          "tsx",
          "worker/main.ts",
          "--app",
          server.base,
          "--token",
          TOKENS[i],
          "--redis",
          redis!.url,
          "--threads",
          "1",
        ],
        { stdio: ["ignore", "pipe", "inherit"] },
      );
      workers.push(w);
      await new Promise<void>((resolve) =>
        w.stdout!.on("data", (d) => String(d).includes("solving chunks") && resolve()),
      );
    }

  async function timedRun(name: string, text: string): Promise<RunFigures> {
    const made = await server.api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
      name,
      text,
      message: "bench",
    });
    if (made.status !== 201) throw new Error(`creating ${name}: ${made.status} ${JSON.stringify(made.json)}`);
    const started = await server.api<{ run: { id: string } }>("POST", "/api/runs", {
      commit: made.json.commit.id,
      timeLimitSeconds: 3600,
    });
    if (started.status !== 201) throw new Error(`starting ${name}: ${started.status} ${JSON.stringify(started.json)}`);
    const id = started.json.run.id;
    const state = await server.waitRun(id, 500);
    const run = (
      await server.api<{ run: { createdAt: number; finishedAt: number; pointsDone: number; reason: string | null } }>(
        "GET",
        `/api/runs/${id}`,
      )
    ).json.run;
    if (state !== "done") throw new Error(`${name} on ${setup}: ${state} (${run.reason})`);
    const db = new Database(process.env.RUNNEL_DB!, { readonly: true });
    const chunks = db
      .prepare(
        "select worker_token_id w, claimed_at c, finished_at f from run_chunks where run_id = ? order by claimed_at",
      )
      .all(id) as { w: string | null; c: number | null; f: number | null }[];
    db.close();
    const figures: RunFigures = {
      wallS: (new Date(run.finishedAt).getTime() - new Date(run.createdAt).getTime()) / 1000,
      points: run.pointsDone,
      chunks: chunks.length,
    };
    if (setup === "queue-2") {
      const gaps: number[] = [];
      const lens: number[] = [];
      const byWorker = new Map<string, typeof chunks>();
      for (const c of chunks) byWorker.set(c.w ?? "?", [...(byWorker.get(c.w ?? "?") ?? []), c]);
      for (const list of byWorker.values())
        list.forEach((c, i) => {
          lens.push(c.f! - c.c!);
          if (i > 0) gaps.push(c.c! - list[i - 1].f!);
        });
      const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / Math.max(1, xs.length);
      // Two workers claim alternately; a gap longer than a chunk means the worker waited for work, not the queue.
      figures.gapMs = mean(gaps.filter((g) => g < mean(lens)));
      figures.chunkMs = mean(lens);
    }
    return figures;
  }

  if (setup === "ingest") return { setup, ...(await ingest(server, TOKENS[0])), sweep: null!, mismatch: null! };
  const sweep = await timedRun("Bench sweep", sweepText(POINTS));
  const mismatch = await timedRun("Bench mismatch", mismatchText(SAMPLES));
  for (const w of workers) w.kill("SIGTERM");
  await redis?.stop();
  return { setup, sweep, mismatch };
}

/** Posts synthetic points of the grid as two queue workers would, while ten clients read the run. */
async function ingest(server: Awaited<ReturnType<typeof startBenchServer>>, token: string) {
  const { encodeBatch } = await import("../app/lib/run-wire");
  const made = await server.api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
    name: "Bench ingest",
    text: sweepText(INGEST),
    message: "bench",
  });
  // No queue worker runs: the run's chunks wait in Redis and this bench hands them out to itself.
  const started = await server.api<{ run: { id: string } }>("POST", "/api/runs", {
    commit: made.json.commit.id,
    timeLimitSeconds: 3600,
  });
  const id = started.json.run.id;
  const db = new Database(process.env.RUNNEL_DB!, { readonly: true });
  const chunks = db.prepare("select chunk, start, end from run_chunks where run_id = ? order by chunk").all(id) as {
    chunk: number;
    start: number;
    end: number;
  }[];
  db.close();
  const wh = { authorization: `Bearer ${token}` };
  const post = (path: string, body: BodyInit, type: string) =>
    fetch(server.base + path, { method: "POST", headers: { ...wh, "content-type": type }, body });
  let done = false;
  const reads: number[] = [];
  const readers = Array.from({ length: 10 }, async (_, i) => {
    await pause(i * 100);
    while (!done) {
      const t = performance.now();
      await (await fetch(`${server.base}/api/runs/${id}`, { headers: server.auth })).arrayBuffer();
      await (await fetch(`${server.base}/api/runs/${id}/results?view=series`, { headers: server.auth })).arrayBuffer();
      reads.push(performance.now() - t);
      await pause(Math.max(0, 1000 - (performance.now() - t)));
    }
  });
  let bytes = 0;
  const t0 = performance.now();
  let next = 0;
  const poster = async () => {
    for (let k = next++; k < chunks.length; k = next++) {
      const c = chunks[k];
      const res = await post("/api/worker/claims", JSON.stringify({ runId: id, chunk: c.chunk }), "application/json");
      const claim = ((await res.json()) as { claim: { attempt: number; counts: Record<string, number> } }).claim;
      const n = claim.counts as { nodes: number; rails: number; probes: number; params: number; devices: number };
      for (let p = c.start; p < c.end; p += 16) {
        const pts = [];
        for (let q = p; q < Math.min(c.end, p + 16); q++)
          pts.push({
            point: q,
            sample: 0,
            method: "linear" as const,
            iterations: 1,
            residual: 0,
            error: null,
            nodes: new Float64Array(n.nodes).fill(0.5),
            rails: new Float64Array(n.rails),
            probes: new Float64Array(n.probes),
            params: new Float64Array(n.params),
            current: new Float64Array(n.devices).fill(1e-9),
            ic: new Float32Array(n.devices).fill(0.01),
            saturated: new Uint8Array(n.devices).fill(1),
          });
        const batch = encodeBatch(pts, n);
        bytes += batch.byteLength;
        const r = await post(
          `/api/worker/chunks/${id}/${c.chunk}/points?attempt=${claim.attempt}`,
          batch,
          "application/octet-stream",
        );
        if (r.status !== 200) throw new Error(`ingest post: ${r.status} ${await r.text()}`);
        await r.arrayBuffer();
      }
    }
  };
  await Promise.all([poster(), poster()]);
  const s = (performance.now() - t0) / 1000;
  done = true;
  await Promise.all(readers);
  await server.api("POST", `/api/runs/${id}/cancel`);
  const sorted = [...reads].sort((a, b) => a - b);
  return {
    ingest: {
      pointsPerS: INGEST / s,
      mbPerS: bytes / 1e6 / s,
      readP50: sorted[Math.floor(0.5 * (sorted.length - 1))],
      readP95: sorted[Math.floor(0.95 * (sorted.length - 1))],
      reads: sorted.length,
    },
  };
}

// ---------------------------------------------------------------- the driver

if (SETUP) {
  const r = await runOne(SETUP);
  console.log("RESULT " + JSON.stringify(r));
  process.exit(0);
}

const hasRedis = spawnSync("sh", ["-c", "command -v redis-server"]).status === 0;
const setups = ["local-1", "local-N", ...(hasRedis ? ["queue-2", "ingest"] : [])];
if (!hasRedis) console.log("bench:queue: redis-server is not installed: the queue set-ups are skipped");
const results: Record<string, SetupResult> = {};
for (const setup of setups) {
  const child = spawnSync(process.execPath, ["--import", "tsx", "bench/api-queue.ts", ...argv, "--setup", setup], {
    encoding: "utf8",
    stdio: ["ignore", "pipe", "inherit"],
    maxBuffer: 64 * 1024 * 1024,
  });
  const line = child.stdout.split("\n").find((l) => l.startsWith("RESULT "));
  if (!line) throw new Error(`bench:queue ${setup} failed (exit ${child.status})`);
  results[setup] = JSON.parse(line.slice(7)) as SetupResult;
  console.log(`${setup}: ${JSON.stringify(results[setup])}`);
}

const f = (x: number, d = 1) => x.toFixed(d);
console.log(`\nMachine: ${machineLine()}`);
console.log(`Grid 64 × 64: sweep ${POINTS} points, Monte Carlo ${SAMPLES} samples; wall time created → finished (s)`);
console.log("| set-up | sweep | × local-1 | Monte Carlo | × local-1 |");
console.log("|---|---|---|---|---|");
for (const s of setups.filter((x) => x !== "ingest")) {
  const r = results[s];
  console.log(
    `| ${s} | ${f(r.sweep.wallS)} s (${r.sweep.chunks} chunks) | ${f(results["local-1"].sweep.wallS / r.sweep.wallS, 2)} | ${f(r.mismatch.wallS)} s (${r.mismatch.chunks} chunks) | ${f(results["local-1"].mismatch.wallS / r.mismatch.wallS, 2)} |`,
  );
}
const q = results["queue-2"];
if (q) {
  const n = results["local-N"];
  console.log(
    `queue-2 against local-N: sweep ${f((100 * (q.sweep.wallS - n.sweep.wallS)) / n.sweep.wallS)} %, Monte Carlo ${f((100 * (q.mismatch.wallS - n.mismatch.wallS)) / n.mismatch.wallS)} %`,
  );
  for (const [k, r] of [
    ["sweep", q.sweep],
    ["Monte Carlo", q.mismatch],
  ] as const)
    console.log(
      `queue overhead (${k}): ${f(r.gapMs!)} ms between a worker's chunks, a chunk ${f(r.chunkMs!, 0)} ms: ${f((100 * r.gapMs!) / r.chunkMs!, 2)} %`,
    );
  const g = results.ingest.ingest!;
  console.log(
    `ingestion: ${f(g.pointsPerS)} points/s (${f(g.mbPerS)} MB/s) from 2 posting clients while 10 read (p50 ${f(g.readP50)} ms, p95 ${f(g.readP95)} ms over ${g.reads} reads)`,
  );
  const perMachine = POINTS / q.sweep.wallS;
  console.log(`one 2-process worker machine solves ${f(perMachine)} points/s of this grid; projected:`);
  for (const m of [4, 16, 64])
    console.log(
      `  ${m} machines: ${f(Math.min(m * perMachine, g.pointsPerS))} points/s${m * perMachine > g.pointsPerS ? " (the app's ingestion is the limit)" : ""}`,
    );
}
console.log(`cores: ${os.availableParallelism()}`);
