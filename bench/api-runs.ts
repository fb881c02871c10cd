/**
 * The run API under load (`npm run bench:api`): a 1,000-point sweep of the
 * lateral gate on a 64 × 64 diffuser grid (4,096 internal nodes, 12,160
 * devices) started through POST /api/runs on the production build, while 20
 * clients read its run page the way the page does: the run's state every
 * second, the per-point series every 2 s, the names once (view=layout), and a
 * whole point in binary form (the tables) when the page opens and every 5 s
 * after (a person moving the point slider).
 *
 * Reports the run's wall time (its created → finished timestamps), and the read latency p50 / p95
 * / max per request kind during the run and, for comparison, on the idle
 * server after it. Goal: p95 < 100 ms during the run (the solve runs in a
 * worker thread; the request thread only reads).
 *
 * Needs `npm run build` first. Options: --points N (default 1000), --clients N
 * (default 20), --port N (default 3311), --json.
 */
import os from "node:os";
import { gridText } from "./workloads";
import { numberOption, startBenchServer } from "./api-server";

const argv = process.argv.slice(2);
const POINTS = numberOption(argv, "--points", 1000);
const CLIENTS = numberOption(argv, "--clients", 20);
const PORT = numberOption(argv, "--port", 3311);
const JSON_OUT = argv.includes("--json");
const N = 64;

const { base, auth, api } = await startBenchServer("bench:api", PORT);

/** The 64 × 64 diffuser grid of bench/workloads.ts with two probes and a sweep of the lateral gate. */
function sweepText(points: number): string {
  const c = N / 2;
  return gridText(
    "bench_grid",
    N,
    `probe centre = voltage(n${c}_${c})\nprobe edge = current(o0_0)\nsweep vh from 0.65 to 0.85 points ${points}\n`,
  );
}

const created = await api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
  name: "Bench grid",
  text: sweepText(POINTS),
  message: "bench",
});
if (created.status !== 201) throw new Error(`creating the network: ${created.status} ${JSON.stringify(created.json)}`);

type Kind = "state" | "series" | "layout" | "point";
const latencies: Record<"during" | "idle", Record<Kind, number[]>> = {
  during: { state: [], series: [], layout: [], point: [] },
  idle: { state: [], series: [], layout: [], point: [] },
};
const haveLayout: boolean[] = [];
let phase: "during" | "idle" = "during";
let pointsDone = 0;
let runState = "queued";

async function timed(kind: Kind, url: string, binary = false): Promise<unknown> {
  const t = performance.now();
  const res = await fetch(base + url, { headers: auth });
  const body = binary ? await res.arrayBuffer() : await res.json();
  latencies[phase][kind].push(performance.now() - t);
  return body;
}

/** One reader of the run page until `until()` is true. */
async function client(runId: string, index: number, until: () => boolean): Promise<void> {
  // spread the clients over the first second
  await new Promise((f) => setTimeout(f, (1000 * index) / CLIENTS));
  let tick = 0;
  while (!until()) {
    const started = performance.now();
    const s = (await timed("state", `/api/runs/${runId}`)) as { run: { state: string; pointsDone: number } };
    if (index === 0) {
      runState = s.run.state;
      pointsDone = s.run.pointsDone;
    }
    if (pointsDone > 0 && tick % 2 === 0) await timed("series", `/api/runs/${runId}/results?view=series`);
    // the page reads the names once (view=layout, cached by the browser), then points in binary form
    if (pointsDone > 0 && !haveLayout[index]) {
      await timed("layout", `/api/runs/${runId}/results?view=layout`);
      haveLayout[index] = true;
    }
    if (pointsDone > 0 && tick % 5 === 0)
      await timed(
        "point",
        `/api/runs/${runId}/results?view=point&point=${Math.floor(Math.random() * pointsDone)}&format=binary`,
        true,
      );
    tick++;
    await new Promise((f) => setTimeout(f, Math.max(0, 1000 - (performance.now() - started))));
  }
}

const t0 = performance.now();
const started = await api<{ run: { id: string } }>("POST", "/api/runs", {
  commit: created.json.commit.id,
  timeLimitSeconds: 3600,
});
if (started.status !== 201) throw new Error(`starting the run: ${started.status} ${JSON.stringify(started.json)}`);
const runId = started.json.run.id;
const live = () => runState === "queued" || runState === "running";
await Promise.all(
  Array.from({ length: CLIENTS }, (_, i) => client(runId, i, () => !live() && performance.now() - t0 > 1500)),
);
const wall = performance.now() - t0;
const final = await api<{
  run: {
    state: string;
    pointsDone: number;
    createdAt: number;
    startedAt: number;
    finishedAt: number;
    reason: string | null;
  };
}>("GET", `/api/runs/${runId}`);

phase = "idle";
const idleEnd = performance.now() + 10_000;
await Promise.all(Array.from({ length: CLIENTS }, (_, i) => client(runId, i, () => performance.now() > idleEnd)));

const pct = (xs: number[], p: number) => {
  if (xs.length === 0) return NaN;
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(p * (s.length - 1)))];
};
const summary = (xs: number[]) => ({ n: xs.length, p50: pct(xs, 0.5), p95: pct(xs, 0.95), max: pct(xs, 1) });
const all = (ph: "during" | "idle") => Object.values(latencies[ph]).flat();
const result = {
  machine: `${os.cpus()[0]?.model ?? "cpu"} × ${os.availableParallelism()}, node ${process.version}`,
  network: { nodes: N * N, devices: N * N + 2 * N * (N - 1) },
  points: POINTS,
  clients: CLIENTS,
  run: {
    state: final.json.run.state,
    pointsDone: final.json.run.pointsDone,
    wall_s: (final.json.run.finishedAt - final.json.run.createdAt) / 1000,
    readers_s: wall / 1000,
    worker_s: (final.json.run.finishedAt - final.json.run.startedAt) / 1000,
    reason: final.json.run.reason,
  },
  during: {
    all: summary(all("during")),
    state: summary(latencies.during.state),
    series: summary(latencies.during.series),
    layout: summary(latencies.during.layout),
    point: summary(latencies.during.point),
  },
  idle: {
    all: summary(all("idle")),
    state: summary(latencies.idle.state),
    series: summary(latencies.idle.series),
    layout: summary(latencies.idle.layout),
    point: summary(latencies.idle.point),
  },
};
const goal = result.during.all.p95 < 100;

if (JSON_OUT) console.log(JSON.stringify({ ...result, goal_p95_under_100ms: goal }, null, 2));
else {
  const r = result.run;
  console.log(`run API under load (${result.machine})`);
  console.log(
    `  ${POINTS}-point sweep on ${result.network.nodes.toLocaleString("en-US")} nodes / ${result.network.devices.toLocaleString("en-US")} devices: ${r.state}, ${r.pointsDone} points, wall ${r.wall_s.toFixed(1)} s from POST to done (in the worker ${r.worker_s.toFixed(1)} s)`,
  );
  console.log(`  read latency, ${CLIENTS} clients (ms):        n      p50      p95      max`);
  for (const ph of ["during", "idle"] as const) {
    for (const k of ["all", "state", "series", "layout", "point"] as const) {
      const s = result[ph][k];
      console.log(
        `    ${`${ph === "during" ? "during the run" : "idle, after"} · ${k}`.padEnd(38)}${String(s.n).padStart(5)}${s.p50.toFixed(1).padStart(9)}${s.p95.toFixed(1).padStart(9)}${s.max.toFixed(1).padStart(9)}`,
      );
    }
  }
  console.log(`  goal p95 < 100 ms during the run: ${goal ? "met" : "NOT met"}`);
}
process.exit(0);
