/**
 * The compare page and its API at the size of real work (`npm run bench:api`):
 * two commits of the LM-64 edge row (64 taps, 66 probes) with a 1,000-point
 * sweep of the lateral gate (the output devices' width changed between them),
 * and two commits of the same row under a 200-sample Monte Carlo of threshold
 * mismatch (the output devices' area changed). Both pairs are run to the end
 * through POST /api/runs on the production build (scripts/lib/next-server.ts,
 * the server `npm start` runs), then:
 * - the API: GET /api/compare (text diff and the per-analysis summaries),
 *   GET /api/compare/series (the overlays' curves, as the page asks for them)
 *   and the first page of node voltages sorted by |Δ| (GET /api/compare/entities):
 *   time to the last byte and bytes on the wire (gzip accepted, as a browser does);
 * - the page, in Debian's Chromium (Playwright), signed in as a designer: time
 *   from navigation to the page's first byte and to its first contentful paint
 *   (the summaries are rendered on the server into the page's one HTML answer,
 *   so they paint with it: the bench checks they are in it), and the bytes the
 *   page transferred until the network was idle (the overlays' curves
 *   included), with a cold cache (first visit: scripts, styles and fonts
 *   included) and a warm one (what each later visit costs).
 * Medians of --repeat loads (default 7). Goal: summaries painted in < 1 s and
 * < 300 kB sent per visit.
 *
 * Needs `npm run build` first. Options: --points N (default 1000), --samples N
 * (default 200), --repeat N, --port N (default 3312), --json.
 */
import fs from "node:fs";
import http from "node:http";
import { chromium, type Browser, type Page } from "@playwright/test";
import { machineLine, numberOption, startBenchServer } from "./api-server";

const argv = process.argv.slice(2);
const POINTS = numberOption(argv, "--points", 1000);
const SAMPLES = numberOption(argv, "--samples", 200);
const REPEAT = numberOption(argv, "--repeat", 7);
const PORT = numberOption(argv, "--port", 3312);
const JSON_OUT = argv.includes("--json");
const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
const GOAL_MS = 1000;
const GOAL_BYTES = 300_000;

const { base, api, auth, waitRun } = await startBenchServer("bench:api (compare)", PORT);
let browser: Browser | null = null;

/** The LM-64 edge row (examples/row64.runnel) with `analysis` appended and the outputs' size set to `out`. */
function rowText(analysis: string, out: string): string {
  const text = fs.readFileSync("examples/row64.runnel", "utf8");
  const outputs = /(nfet out\{k\} gate=gv source=x\{k\} drain=vdd) w=1u l=1u/;
  if (!outputs.test(text)) throw new Error("examples/row64.runnel changed: the bench cannot find the output devices");
  // the row's expectations are not what this bench measures
  return `${text.replace(outputs, `$1 ${out}`).replace(/^expect .*$/gm, "")}\n${analysis}\n`;
}

async function runToEnd(commit: string): Promise<string> {
  const started = await api<{ run: { id: string } }>("POST", "/api/runs", { commit, timeLimitSeconds: 3600 });
  if (started.status !== 201) throw new Error(`starting a run: ${started.status} ${JSON.stringify(started.json)}`);
  const state = await waitRun(started.json.run.id, 250);
  if (state !== "done") throw new Error(`the run ${started.json.run.id} ended ${state}`);
  return started.json.run.id;
}

/** Commits `before` as a new network and `after` on top of it, runs both; returns the network slug and commit ids. */
async function pair(name: string, before: string, after: string) {
  const created = await api<{ network: { id: string; slug: string }; commit: { id: string } }>(
    "POST",
    "/api/w/lm64-edge-row/networks",
    { name, text: before, message: "before" },
  );
  if (created.status !== 201) throw new Error(`creating ${name}: ${created.status} ${JSON.stringify(created.json)}`);
  const next = await api<{ commit: { id: string } }>("POST", `/api/networks/${created.json.network.id}/commits`, {
    parent: created.json.commit.id,
    text: after,
    message: "after: output devices resized",
  });
  if (next.status !== 201) throw new Error(`committing ${name}: ${next.status} ${JSON.stringify(next.json)}`);
  await runToEnd(created.json.commit.id);
  await runToEnd(next.json.commit.id);
  return { slug: created.json.network.slug, from: created.json.commit.id, to: next.json.commit.id };
}

/** One GET with gzip accepted: milliseconds to the last byte, bytes on the wire, and the decoded body's size. */
function wireGet(url: string, headers: Record<string, string>): Promise<{ ms: number; bytes: number; status: number }> {
  return new Promise((resolve, reject) => {
    const t = performance.now();
    const req = http.get(base + url, { headers: { ...headers, "accept-encoding": "gzip, deflate, br" } }, (res) => {
      let bytes = 0;
      res.on("data", (c: Buffer) => (bytes += c.length));
      res.on("end", () => resolve({ ms: performance.now() - t, bytes, status: res.statusCode ?? 0 }));
    });
    req.on("error", reject);
  });
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length ? s[Math.floor((s.length - 1) / 2)] : NaN;
};

async function apiFigures(q: { from: string; to: string }, analysis: string) {
  const urls = {
    compare: `/api/compare?from=${q.from}&to=${q.to}`,
    series: `/api/compare/series?${new URLSearchParams({ from: q.from, to: q.to, analysis, grid: "0" })}`,
    nodes: `/api/compare/entities?${new URLSearchParams({ from: q.from, to: q.to, analysis, kind: "node", quantity: "voltage", sort: "abs" })}`,
  };
  const out: Record<string, { ms: number; bytes: number }> = {};
  for (const [k, url] of Object.entries(urls)) {
    const ms: number[] = [];
    let bytes = 0;
    for (let i = 0; i < REPEAT; i++) {
      const r = await wireGet(url, { authorization: auth.authorization });
      if (r.status !== 200) throw new Error(`${url}: ${r.status}`);
      ms.push(r.ms);
      bytes = r.bytes;
    }
    out[k] = { ms: median(ms), bytes };
  }
  return out;
}

interface Visit {
  /** Navigation start → the first byte of the page, the first contentful paint (ms). */
  ttfb: number;
  fcp: number;
  bytes: number;
  byType: Record<string, number>;
}

/** One visit of the compare page: paint times from navigation start, and the bytes transferred until idle. */
async function visit(page: Page, url: string): Promise<Visit> {
  const cdp = await page.context().newCDPSession(page);
  await cdp.send("Network.enable");
  const types = new Map<string, string>();
  const byType: Record<string, number> = {};
  let bytes = 0;
  cdp.on("Network.responseReceived", (e) => types.set(e.requestId, e.type));
  cdp.on("Network.loadingFinished", (e) => {
    const t = types.get(e.requestId) ?? "Other";
    byType[t] = (byType[t] ?? 0) + e.encodedDataLength;
    bytes += e.encodedDataLength;
  });
  await page.goto(url, { waitUntil: "commit" });
  await page.getByTestId("probe-summary").first().waitFor({ state: "visible" });
  await page.waitForLoadState("networkidle");
  await page.getByTestId("overlays").first().waitFor({ state: "visible" });
  const t = await page.evaluate(() => ({
    ttfb: (performance.getEntriesByType("navigation")[0] as PerformanceNavigationTiming).responseStart,
    fcp: performance.getEntriesByName("first-contentful-paint")[0]?.startTime ?? Number.NaN,
  }));
  await cdp.detach();
  return { ...t, bytes, byType };
}

async function pageFigures(slug: string, q: { from: string; to: string }) {
  const url = `/w/lm64-edge-row/n/${slug}/compare?from=${q.from}&to=${q.to}`;
  const ctx = await browser!.newContext({ baseURL: base, viewport: { width: 1280, height: 900 } });
  const page = await ctx.newPage();
  await page.goto("/signin");
  await page.getByLabel("E-mail").fill("designer@larkspur.example");
  await page.getByLabel("Password").fill("larkspur-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.getByRole("button", { name: "Sign out" }).waitFor();
  // cold: a fresh page with the HTTP cache cleared; warm: later visits with scripts and styles cached
  const cdp = await ctx.newCDPSession(page);
  await cdp.send("Network.clearBrowserCache");
  await cdp.detach();
  const cold = await visit(page, url);
  const warm: Visit[] = [];
  for (let i = 0; i < REPEAT; i++) warm.push(await visit(page, url));
  // the summaries are rendered on the server, in the page's one HTML answer: they paint with the first contentful paint
  const html = await (await page.request.get(url)).text();
  await ctx.close();
  return {
    summaryInHtml: html.includes('data-testid="probe-summary"'),
    cold,
    warm: {
      ttfb: median(warm.map((v) => v.ttfb)),
      fcp: median(warm.map((v) => v.fcp)),
      bytes: median(warm.map((v) => v.bytes)),
      byType: warm[warm.length - 1].byType,
    },
  };
}

const sweep = await pair(
  "Bench compare sweep",
  rowText(`sweep vh from 0.65 to 0.85 points ${POINTS}`, "w=1u l=1u"),
  rowText(`sweep vh from 0.65 to 0.85 points ${POINTS}`, "w=1.2u l=1u"),
);
const spread = await pair(
  "Bench compare spread",
  rowText(`mismatch runs ${SAMPLES} seed 7 avt 3.5m`, "w=1u l=1u"),
  rowText(`mismatch runs ${SAMPLES} seed 7 avt 3.5m`, "w=2u l=2u"),
);
const analysisOf = async (q: { from: string; to: string }) =>
  (await api<{ analyses: { analysis: string }[] }>("GET", `/api/compare?from=${q.from}&to=${q.to}`)).json.analyses[0]
    .analysis;

const cases = [
  { name: `${POINTS.toLocaleString("en-US")}-point sweep`, ...sweep },
  { name: `${SAMPLES}-sample Monte Carlo`, ...spread },
];
const results = [];
const canBrowse = fs.existsSync(CHROMIUM);
if (canBrowse)
  browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking"],
  });
for (const c of cases) {
  // the first request of a pair: its comparison was computed in the run pool when the second run ended (or is being
  // computed, and the request shares it); later ones find it in the cache. Meanwhile another client asks /api/health every 50 ms: does everyone else still get answers?
  const t = performance.now();
  let done = false;
  const healthMs: number[] = [];
  const prober = (async () => {
    while (!done) {
      const h0 = performance.now();
      await (await fetch(`${base}/api/health`)).arrayBuffer();
      healthMs.push(performance.now() - h0);
      await new Promise((r) => setTimeout(r, 50));
    }
  })();
  const analysis = await analysisOf(c).finally(() => (done = true));
  const firstMs = performance.now() - t;
  await prober;
  const sorted = healthMs.sort((a, b) => a - b);
  const health = {
    probes: sorted.length,
    p95: sorted[Math.min(sorted.length - 1, Math.floor(sorted.length * 0.95))] ?? Number.NaN,
    max: sorted.at(-1) ?? Number.NaN,
  };
  const apiF = await apiFigures(c, analysis);
  const pageF = canBrowse ? await pageFigures(c.slug, c) : null;
  results.push({ case: c.name, analysis, firstMs, health, api: apiF, page: pageF });
}
await browser?.close();

const machine = machineLine();
const goal = results.every(
  (r) => !r.page || (r.page.summaryInHtml && r.page.warm.fcp < GOAL_MS && r.page.warm.bytes < GOAL_BYTES),
);
if (JSON_OUT) console.log(JSON.stringify({ machine, repeat: REPEAT, results, goal }, null, 2));
else {
  const kB = (b: number) => `${(b / 1000).toFixed(1)} kB`;
  console.log(`compare page and API, LM-64 edge row, 66 probes (${machine}; medians of ${REPEAT})`);
  for (const r of results) {
    console.log(`  ${r.case} (analysis ${r.analysis})`);
    console.log(
      `    API compare, the pair's first request (its comparison computed when the second run ended, or in progress): ${r.firstMs.toFixed(0)} ms`,
    );
    console.log(
      `    meanwhile /api/health: ${r.health.probes} probes, p95 ${r.health.p95.toFixed(0)} ms, max ${r.health.max.toFixed(0)} ms`,
    );
    for (const [k, v] of Object.entries(r.api))
      console.log(`    API ${k.padEnd(8)} ${v.ms.toFixed(0).padStart(6)} ms ${kB(v.bytes).padStart(10)} on the wire`);
    if (!r.page) console.log(`    page: SKIPPED (no Chromium at ${CHROMIUM})`);
    else {
      console.log(
        `    page: the summaries are ${r.page.summaryInHtml ? "in the server's HTML (painted with the first paint)" : "NOT in the server's HTML"}`,
      );
      for (const [k, v] of [
        ["first visit", r.page.cold],
        ["later visits", r.page.warm],
      ] as const)
        console.log(
          `    page ${k.padEnd(12)} first byte ${v.ttfb.toFixed(0)} ms, first paint ${v.fcp.toFixed(0)} ms, ${kB(v.bytes)} transferred (${Object.entries(
            v.byType,
          )
            .map(([t, b]) => `${t} ${kB(b)}`)
            .join(", ")})`,
        );
    }
  }
  console.log(
    `  goal (later visits: summaries painted < 1 s, < 300 kB transferred): ${goal ? "met" : "NOT met"}${canBrowse ? "" : " (page not measured)"}`,
  );
}
process.exit(0);
