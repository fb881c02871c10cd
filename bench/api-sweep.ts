/**
 * What the web path costs beside a direct solve (`npm run bench:api`): a
 * 1,000-point sweep of the lateral gate on the 64 × 64 diffuser grid of
 * bench/workloads.ts (4,096 internal nodes, 12,160 devices), measured in one
 * run of this script two ways:
 * - direct: the text elaborated and every point solved in a fresh Node process
 *   running the solver as plain JavaScript (bench/sweep-direct.ts), after one
 *   untimed warm-up: what a program calling the library pays;
 * - web: the same text committed (a new network), then POST /api/runs on the production build,
 *   the client waiting for the run to end (GET /api/runs/[id], --poll ms
 *   between requests, default 100), then reading its results as the run page
 *   does (the series, the names, one whole point in binary form). Each repeat
 *   is the first commit of a new network (the inject's value changes), so no
 *   thread has the network elaborated already and no commit diff against a
 *   parent's run follows the run; the first run after the server started
 *   (its run threads loading their bundle) is reported apart, untimed in the
 *   medians.
 * The web time is split from the run's own timestamps: the POST's answer
 * (elaboration and planning in the interactive pool, the run stored), queued →
 * first chunk claimed, solving and storing the points, the end seen by the
 * client, reading the results. Goal (issue 20): web ≤ 1.3× direct. Medians of
 * --repeat (default 5).
 *
 * Needs `npm run build` first. Options: --points N (default 1000), --repeat N,
 * --poll MS, --port N (default 3313), --json.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { bundleScript } from "./bundle";
import { gridText } from "./workloads";
import { machineLine, numberOption, pause, startBenchServer } from "./api-server";

const argv = process.argv.slice(2);
const POINTS = numberOption(argv, "--points", 1000);
const REPEAT = numberOption(argv, "--repeat", 5);
const POLL = numberOption(argv, "--poll", 100);
const PORT = numberOption(argv, "--port", 3313);
const JSON_OUT = argv.includes("--json");
const N = 64;
const DIRECT = ".build/bench-sweep-direct.mjs";

const text = (rep: number) =>
  gridText(
    "bench_grid",
    N,
    `probe centre = voltage(n${N / 2}_${N / 2})\nprobe edge = current(o0_0)\nsweep vh from 0.65 to 0.85 points ${POINTS}\n`,
    `${(1 + rep / 1000).toFixed(3)}n`,
  );

await bundleScript("bench/sweep-direct.ts", DIRECT);

const { api, base, auth, process: server } = await startBenchServer("bench:api (sweep)", PORT);

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length === 0 ? NaN : s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

function direct(): { wall: number; cpu: number; elaborate: number }[] {
  const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "runnel-bench-sweep-")), "grid.runnel");
  fs.writeFileSync(file, text(0));
  const r = spawnSync(process.execPath, [DIRECT, file, "--repeat", String(REPEAT)], { encoding: "utf8" });
  fs.rmSync(path.dirname(file), { recursive: true, force: true });
  if (r.status !== 0) throw new Error(`the direct solve failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split("\n").pop()!);
}

/** CPU time (ms) of the server's request thread and of its other threads (the pools), from /proc (Linux). */
function serverCpu(): { request: number; threads: number } {
  const pid = server.pid!;
  let request = 0;
  let threads = 0;
  for (const tid of fs.readdirSync(`/proc/${pid}/task`)) {
    let stat: string;
    try {
      stat = fs.readFileSync(`/proc/${pid}/task/${tid}/stat`, "utf8");
    } catch {
      continue; // the thread has ended
    }
    const f = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    const ms = ((Number(f[11]) + Number(f[12])) * 1000) / TICKS;
    if (Number(tid) === pid) request += ms;
    else threads += ms;
  }
  return { request, threads };
}
const TICKS = 100; // USER_HZ on Linux

interface RunTimes {
  createdAt: number;
  startedAt: number;
  finishedAt: number;
  state: string;
}

async function web(rep: number) {
  const created = await api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
    name: `Bench sweep ${rep}`,
    text: text(rep),
    message: "bench",
  });
  if (created.status !== 201)
    throw new Error(`creating the network: ${created.status} ${JSON.stringify(created.json)}`);
  const head = created.json.commit.id;
  const cpu0 = serverCpu();
  const t0 = Date.now();
  const started = await api<{ run: { id: string } }>("POST", "/api/runs", { commit: head, timeLimitSeconds: 3600 });
  if (started.status !== 201) throw new Error(`starting the run: ${started.status} ${JSON.stringify(started.json)}`);
  const posted = Date.now();
  const id = started.json.run.id;
  let run: RunTimes;
  for (;;) {
    run = (await api<{ run: RunTimes }>("GET", `/api/runs/${id}`)).json.run;
    if (run.state !== "queued" && run.state !== "running") break;
    await pause(POLL);
  }
  const seen = Date.now();
  if (run.state !== "done") throw new Error(`the run ended ${run.state}`);
  const series = await api<{ probes?: unknown }>("GET", `/api/runs/${id}/results?view=series`);
  const layout = await api<unknown>("GET", `/api/runs/${id}/results?view=layout`);
  if (series.status !== 200 || layout.status !== 200) throw new Error("reading the results failed");
  const res = await fetch(`${base}/api/runs/${id}/results?view=point&point=${POINTS - 1}&format=binary`, {
    headers: auth,
  });
  if (!res.ok) throw new Error(`reading a point: ${res.status}`);
  await res.arrayBuffer();
  const read = Date.now();
  const cpu1 = serverCpu();
  return {
    total: read - t0,
    post: posted - t0,
    queued: run.startedAt - run.createdAt,
    execute: run.finishedAt - run.startedAt,
    seen: seen - run.finishedAt,
    read: read - seen,
    // the run's own created → finished, beside the client's view of it
    created: run.createdAt - t0,
    // CPU the server spent meanwhile: its request thread, and its pools' threads (threads that ended are not counted)
    cpuRequest: cpu1.request - cpu0.request,
    cpuThreads: cpu1.threads - cpu0.threads,
  };
}

const first = await web(0); // the server's threads start
const webRuns: Awaited<ReturnType<typeof web>>[] = [];
for (let rep = 1; rep <= REPEAT; rep++) webRuns.push(await web(rep));
const directRuns = direct();

const d = {
  wall: median(directRuns.map((r) => r.wall)),
  cpu: median(directRuns.map((r) => r.cpu)),
  elaborate: median(directRuns.map((r) => r.elaborate)),
};
const w = Object.fromEntries(
  (["total", "post", "created", "queued", "execute", "seen", "read", "cpuRequest", "cpuThreads"] as const).map((k) => [
    k,
    median(webRuns.map((r) => r[k])),
  ]),
) as Record<
  "total" | "post" | "created" | "queued" | "execute" | "seen" | "read" | "cpuRequest" | "cpuThreads",
  number
>;
const ratio = w.total / d.wall;
const result = {
  machine: machineLine(),
  network: { nodes: N * N, devices: N * N + 2 * N * (N - 1) },
  points: POINTS,
  repeat: REPEAT,
  pollMs: POLL,
  direct_ms: d,
  first_run_ms: first.total,
  web_ms: w,
  ratio,
  goal_met: ratio <= 1.3,
  runs: { direct: directRuns, web: webRuns },
};
if (JSON_OUT) console.log(JSON.stringify(result, null, 2));
else {
  console.log(`web path against a direct solve (${result.machine})`);
  console.log(
    `  ${POINTS}-point sweep on ${result.network.nodes.toLocaleString("en-US")} nodes / ${result.network.devices.toLocaleString("en-US")} devices, medians of ${REPEAT} (ms):`,
  );
  console.log(
    `    direct: elaborate + solve ${d.wall.toFixed(0)} wall, ${d.cpu.toFixed(0)} CPU (elaborate ${d.elaborate.toFixed(0)})`,
  );
  console.log(`    web: POST → results read ${w.total.toFixed(0)}`);
  console.log(
    `      server CPU meanwhile   ${(w.cpuRequest + w.cpuThreads).toFixed(0)} (request thread ${w.cpuRequest.toFixed(0)}, pools ${w.cpuThreads.toFixed(0)})`,
  );
  console.log(`      POST answered          ${w.post.toFixed(0)}`);
  console.log(`      queued → first chunk   ${w.queued.toFixed(0)}`);
  console.log(`      solving + storing      ${w.execute.toFixed(0)}`);
  console.log(`      end seen by the client ${w.seen.toFixed(0)} (polling every ${POLL} ms)`);
  console.log(`      results read           ${w.read.toFixed(0)}`);
  console.log(`    (the first run after the server started: ${first.total.toFixed(0)})`);
  console.log(`  ratio web / direct ${ratio.toFixed(2)} (goal ≤ 1.3: ${result.goal_met ? "met" : "NOT met"})`);
}
process.exit(0);
