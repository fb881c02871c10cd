/**
 * Stalls (`npm run bench:api`, its last part): while one heavy request runs,
 * does the server keep answering everyone else? For each heavy request below,
 * a second client probes `/api/health` and a small run's page (`/runs/ID`, the
 * server-rendered HTML with a session cookie) every 50 ms, from the moment the
 * heavy request is sent until its answer has been read whole:
 *
 * - commit of a 2,000,000-device chain (create the network with its text);
 * - its run start (POST /api/runs), then the run itself until it is done;
 * - its JSON export, and its devices CSV export (2,000,000 rows), read to the end;
 * - a 1,000,000-row measurement CSV upload (under the 10 MB limit);
 * - a commit whose expression nests 300,000 levels deep (refused by the depth limit: the work is the parse).
 *
 * Reports per heavy request: its own time, the probes' count, p50, p95 and max
 * latency, and the server's RSS before (idle) and after. Goal: probes p95 < 100 ms
 * and max < 500 ms, RSS back within 20 % of its idle figure afterwards (measured
 * 15 s and 70 s after the last request: the run pool keeps an idle thread 60 s).
 *
 * Needs `npm run build` first. Options: --port N (default 3312), --json, --only NAME.
 */
import fs from "node:fs";
import { chainText } from "./workloads";
import { machineLine, pause, startBenchServer } from "./api-server";

const argv = process.argv.slice(2);
const PORT = argv.includes("--port") ? Number(argv[argv.indexOf("--port") + 1]) : 3312;
const JSON_OUT = argv.includes("--json");
const ONLY = argv.includes("--only") ? argv[argv.indexOf("--only") + 1] : null;

const server = await startBenchServer("bench:api stall", PORT, { viewerSession: true });
const { base, auth, api, waitRun, rssMb, memory, cookie } = server;

// A small run whose page the probe reads.
const small = await api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
  name: "Probe divider",
  text: fs.readFileSync("examples/divider.runnel", "utf8"),
  message: "probe",
});
const smallRun = await api<{ run: { id: string } }>("POST", "/api/runs", { commit: small.json.commit.id });
await waitRun(smallRun.json.run.id);
const pageUrl = `/runs/${smallRun.json.run.id}`;

const machineAtStart = machineLine();
const failures: string[] = [];
server.process.on("exit", (code, signal) => console.error(`stall: the server exited (${code ?? signal})`));

/** Probes every 50 ms until `stop()` is true; latencies in ms (a failed probe counts with its time, and is listed). */
async function probe(done: () => boolean): Promise<number[]> {
  const out: number[] = [];
  let k = 0;
  while (!done()) {
    const t0 = performance.now();
    const url = k++ % 2 === 0 ? "/api/health" : pageUrl;
    try {
      const res = await fetch(base + url, { headers: { cookie } });
      await res.arrayBuffer();
      if (!res.ok) failures.push(`${url}: ${res.status}`);
    } catch (e) {
      failures.push(`${url}: ${(e as Error).message} ${String((e as { cause?: unknown }).cause ?? "")}`);
    }
    const ms = performance.now() - t0;
    out.push(ms);
    await pause(Math.max(0, 50 - ms));
  }
  return out;
}

const quantile = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length ? s[Math.min(s.length - 1, Math.floor(q * s.length))] : NaN;
};

interface Row {
  workload: string;
  status: number | string;
  seconds: number;
  probes: number;
  p50: number;
  p95: number;
  max: number;
  rssBefore: number;
  rssAfter: number;
  detail: string;
  /** When it ran, in µs of the monotonic clock (process.hrtime, as the server's CPU profiles count). */
  fromUs: number;
  toUs: number;
}
const rows: Row[] = [];

/** Runs `heavy` while probing; the row records both. */
async function measure(workload: string, heavy: () => Promise<{ status: number | string; detail?: string }>) {
  if (ONLY && !workload.includes(ONLY)) return;
  const rssBefore = rssMb();
  const fromUs = Number(process.hrtime.bigint() / 1000n);
  let finished = false;
  const probing = probe(() => finished);
  const t0 = performance.now();
  const r = await heavy()
    .catch((e: Error) => ({
      status: `error: ${e.message} ${String((e as { cause?: unknown }).cause ?? "")}`,
      detail: "",
    }))
    .finally(() => (finished = true));
  const seconds = (performance.now() - t0) / 1000;
  const lat = await probing;
  rows.push({
    workload,
    status: r.status,
    seconds,
    probes: lat.length,
    p50: quantile(lat, 0.5),
    p95: quantile(lat, 0.95),
    max: Math.max(...lat),
    rssBefore,
    rssAfter: rssMb(),
    detail: r.detail ?? "",
    fromUs,
    toUs: Number(process.hrtime.bigint() / 1000n),
  });
  if (!JSON_OUT)
    console.error(`stall: ${workload}: ${seconds.toFixed(1)} s, probes p95 ${quantile(lat, 0.95).toFixed(1)} ms`);
}

/** Reads a response to its end, counting bytes (never holding the body). */
async function drain(res: Response): Promise<number> {
  let n = 0;
  const reader = res.body!.getReader();
  for (;;) {
    const { done, value } = await reader.read();
    if (done) return n;
    n += value.byteLength;
  }
}

// Each probed route answers a few times first: a route's first request loads its code, once per server.
for (let k = 0; k < 6; k++) await fetch(base + (k % 2 === 0 ? "/api/health" : pageUrl), { headers: { cookie } });
await pause(2000);
const idle = rssMb();
const memLine = (when: string) => {
  const m = memory();
  return `${when}: RSS ${m.rss.toFixed(0)} MB (anonymous ${m.anon.toFixed(0)}, file-backed ${m.file.toFixed(0)}), ${m.threads} threads`;
};
const memoryLines = [memLine("idle")];
// The floor: the same probes against the idle server (what the machine's load alone costs them).
await measure("nothing (idle server, 10 s)", async () => {
  await pause(10_000);
  return { status: "-" };
});
let chainCommit = "";
let chainRun = "";

await measure("commit 2M-device chain", async () => {
  const r = await api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
    name: "Chain 2M",
    text: chainText(1_000_000),
    message: "two million devices",
  });
  chainCommit = r.json.commit?.id ?? "";
  return { status: r.status };
});
await measure("start its run", async () => {
  const r = await api<{ run: { id: string } }>("POST", "/api/runs", { commit: chainCommit });
  chainRun = r.json.run?.id ?? "";
  return { status: r.status };
});
await measure("its run, start to done", async () => ({ status: chainRun ? await waitRun(chainRun) : "no run" }));
await measure("its JSON export", async () => {
  const res = await fetch(`${base}/api/runs/${chainRun}/export?format=json`, { headers: auth });
  const bytes = await drain(res);
  return { status: res.status, detail: `${(bytes / 1048576).toFixed(0)} MB` };
});
await measure("its devices CSV export", async () => {
  const res = await fetch(`${base}/api/runs/${chainRun}/export?format=csv&table=devices`, { headers: auth });
  const bytes = await drain(res);
  return { status: res.status, detail: `${(bytes / 1048576).toFixed(0)} MB` };
});
// Built before the measurement: this process also sends the probes, and a million-line join here would delay them.
const csvLines = ["tap [1],i [A]"];
for (let k = 0; k < 1_000_000; k++) csvLines.push(`${k},1`);
const csv = csvLines.join("\n") + "\n";
await measure("1M-row measurement CSV", async () => {
  const net = await api<{ networks: { id: string; name: string }[] }>("GET", "/api/w/lm64-edge-row/networks");
  const target = net.json.networks.find((n) => n.name === "Probe divider")!.id;
  const form = new FormData();
  form.set("file", new Blob([csv], { type: "text/csv" }), "bench.csv");
  const up = await fetch(`${base}/api/networks/${target}/measurements`, {
    method: "POST",
    headers: { authorization: auth.authorization },
    body: form,
  });
  await up.arrayBuffer();
  return { status: up.status, detail: `${(csv.length / 1048576).toFixed(1)} MB` };
});
await measure("300,000-level nesting", async () => {
  const text = `network deep\nrail vdd = ${"(".repeat(300_000)}1${")".repeat(300_000)}\n`;
  const r = await api<{ commit: { errorCount: number } }>("POST", "/api/w/lm64-edge-row/networks", {
    name: "Deep",
    text,
    message: "deep",
  });
  return { status: r.status, detail: `${r.json.commit?.errorCount ?? "?"} errors` };
});

await pause(15_000);
const after15 = rssMb();
memoryLines.push(memLine("15 s after"));
await pause(55_000);
const after70 = rssMb();
memoryLines.push(memLine("70 s after"));

if (JSON_OUT) {
  console.log(
    JSON.stringify(
      {
        machineAtStart,
        machineAtEnd: machineLine(),
        idleRssMb: idle,
        after15RssMb: after15,
        after70RssMb: after70,
        rows,
        failures,
      },
      null,
      2,
    ),
  );
} else {
  const f = (x: number, d = 1) => x.toFixed(d);
  console.log(`\nStalls: probes (/api/health and a run page, every 50 ms) while each heavy request runs`);
  console.log(`Machine at the start: ${machineAtStart}`);
  console.log(`Machine at the end: ${machineLine()}`);
  console.log(
    "| heavy request | answer | its time (s) | probes | p50 (ms) | p95 (ms) | max (ms) | RSS before → after (MB) |",
  );
  console.log("|---|---|---:|---:|---:|---:|---:|---|");
  for (const r of rows)
    console.log(
      `| ${r.workload}${r.detail ? ` (${r.detail})` : ""} | ${r.status} | ${f(r.seconds)} | ${r.probes} | ${f(r.p50)} | ${f(r.p95)} | ${f(r.max)} | ${f(r.rssBefore, 0)} → ${f(r.rssAfter, 0)} |`,
    );
  console.log(
    `\nRSS: idle ${f(idle, 0)} MB; 15 s after the last request ${f(after15, 0)} MB; 70 s after ${f(after70, 0)} MB (goal: within 20 % of idle, ${f(idle * 1.2, 0)} MB)`,
  );
  console.log(memoryLines.join("\n"));
  if (failures.length > 0) console.log(`\n${failures.length} probes failed: ${failures.slice(0, 10).join("; ")}`);
}
process.exit(0);
