/**
 * The run page in a browser (`npm run bench:ui`): time to the first plot and
 * bytes sent, for the two run pages issue 17 names:
 * - a 1,000-point sweep of the lateral gate on the 64-tap row (examples/row64.runnel, 66 probes): the Probes
 *   view's plot;
 * - the 32 × 32 smoothing grid (examples/grid32.runnel, one operating point): the Map view's heat map
 *   (the page opened, then its Map tab clicked).
 * Each page is opened `--reps` times (default 5) in a fresh browser context with the cache off, as a first
 * visit: time from navigation to the plot drawn, and bytes received (all, and the API's answers) in that time,
 * from Chromium's own network accounting (encodedDataLength, i.e. on the wire); then visited again in the same
 * browser with its cache (a designer's tab). Medians reported.
 * Goal: first plot < 1 s.
 *
 * Needs `npm run build` first and Debian's Chromium. Options: --reps N, --port N (default 3312), --json.
 */
import fs from "node:fs";
import { chromium, type Page } from "@playwright/test";
import { machineLine, numberOption, startBenchServer } from "./api-server";

const argv = process.argv.slice(2);
const REPS = numberOption(argv, "--reps", 5);
const PORT = numberOption(argv, "--port", 3312);
const JSON_OUT = argv.includes("--json");
const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

if (!fs.existsSync(CHROMIUM)) {
  console.error(`bench:ui: no Chromium at ${CHROMIUM} (Debian's chromium package, or set CHROMIUM_PATH)`);
  process.exit(1);
}
const server = await startBenchServer("bench:ui", PORT);
const { base, api } = server;

/** Creates a network from `text`, runs it to the end, returns the run's id. */
async function finishedRun(name: string, text: string): Promise<string> {
  const made = await api<{ commit: { id: string } }>("POST", "/api/w/lm64-edge-row/networks", {
    name,
    text,
    message: "bench",
  });
  if (made.status !== 201) throw new Error(`${name}: ${made.status} ${JSON.stringify(made.json)}`);
  const started = await api<{ run: { id: string } }>("POST", "/api/runs", { commit: made.json.commit.id });
  if (started.status !== 201) throw new Error(`${name}: ${started.status} ${JSON.stringify(started.json)}`);
  const state = await server.waitRun(started.json.run.id);
  if (state !== "done") throw new Error(`${name}: the run ended ${state}`);
  return started.json.run.id;
}

const row = fs.readFileSync("examples/row64.runnel", "utf8").concat("\nsweep vh from 0.65 to 0.85 points 1000\n");
const grid = fs.readFileSync("examples/grid32.runnel", "utf8");
const rowRun = await finishedRun("Bench row sweep", row);
const gridRun = await finishedRun("Bench grid map", grid);

const browser = await chromium.launch({
  executablePath: CHROMIUM,
  args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--no-first-run"],
});

/** A signed-in browser context (the session cookie from the sign-in form). */
async function signedIn() {
  const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const page = await context.newPage();
  await page.goto(`${base}/signin`);
  await page.getByLabel("E-mail").fill("designer@larkspur.example");
  await page.getByLabel("Password").fill("larkspur-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((u) => !u.pathname.startsWith("/signin"));
  return { context, page };
}

interface Sample {
  /** Navigation to the first plot on screen: the server's drawing (first look) or the interactive plot. */
  firstMs: number;
  /** Navigation to the interactive plot drawn. */
  ms: number;
  bytes: number;
  apiBytes: number;
}

async function measure(
  page: Page,
  url: string,
  ready: string,
  first: string | undefined,
  tab: string | undefined,
  cold: boolean,
): Promise<Sample> {
  const cdp = await page.context().newCDPSession(page);
  await cdp.send("Network.enable");
  await cdp.send("Network.setCacheDisabled", { cacheDisabled: cold });
  const api = new Set<string>();
  let bytes = 0;
  let apiBytes = 0;
  cdp.on("Network.responseReceived", (e) => {
    if (e.response.url.includes("/api/")) api.add(e.requestId);
  });
  cdp.on("Network.loadingFinished", (e) => {
    bytes += e.encodedDataLength;
    if (api.has(e.requestId)) apiBytes += e.encodedDataLength;
  });
  const t0 = Date.now();
  await page.goto(url, { waitUntil: "commit" });
  const painted = () => page.evaluate(() => new Promise((f) => requestAnimationFrame(() => f(null))));
  let firstMs = 0;
  if (first) {
    await page.waitForSelector(`${first}, ${ready}`, { state: "visible", timeout: 60_000 });
    await painted();
    firstMs = Date.now() - t0;
  }
  if (tab) await page.getByRole("tab", { name: tab }).click({ timeout: 60_000 });
  await page.waitForSelector(ready, { state: "visible", timeout: 60_000 });
  // one more frame, so the canvas has been painted
  await painted();
  const ms = Date.now() - t0;
  await cdp.detach();
  return { firstMs: first ? firstMs : ms, ms, bytes, apiBytes };
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

const pages = [
  {
    name: "row64-sweep-1000",
    url: `${base}/runs/${rowRun}`,
    ready: "[data-slot=plot] canvas",
    first: "[data-slot=first-look] svg",
  },
  {
    name: "grid32-map",
    url: `${base}/runs/${gridRun}`,
    ready: "[data-slot=heat-map]",
    tab: "Map",
    first: "[data-slot=first-look] svg",
  },
];
const results: {
  name: string;
  reps: number;
  /** The first plot on screen (the server's drawing where there is one). */
  firstPlotMs: number;
  /** The interactive plot drawn. */
  interactiveMs: number;
  bytes: number;
  apiBytes: number;
  /** The same page visited again in the same browser (its cache kept, as a designer's open tab has it). */
  againMs: number;
  againInteractiveMs: number;
  againBytes: number;
  samples: Sample[];
}[] = [];
for (const p of pages) {
  const samples: Sample[] = [];
  const again: Sample[] = [];
  for (let i = 0; i < REPS; i++) {
    const { context, page } = await signedIn();
    samples.push(await measure(page, p.url, p.ready, p.first, p.tab, true));
    await page.goto(`${base}/`);
    again.push(await measure(page, p.url, p.ready, p.first, p.tab, false));
    await context.close();
  }
  results.push({
    name: p.name,
    reps: REPS,
    firstPlotMs: median(samples.map((s) => s.firstMs)),
    interactiveMs: median(samples.map((s) => s.ms)),
    bytes: median(samples.map((s) => s.bytes)),
    apiBytes: median(samples.map((s) => s.apiBytes)),
    againMs: median(again.map((s) => s.firstMs)),
    againInteractiveMs: median(again.map((s) => s.ms)),
    againBytes: median(again.map((s) => s.bytes)),
    samples,
  });
}
await browser.close();

if (JSON_OUT) console.log(JSON.stringify(results, null, 2));
else {
  console.log(`run page in Chromium, first visit, cache off; medians of ${REPS} (${machineLine()})`);
  console.log(
    "page                    first plot   interactive   bytes (all)   bytes (API)   visit again   interactive   bytes again",
  );
  const kib = (b: number) => `${(b / 1024).toFixed(0)} KiB`;
  for (const r of results)
    console.log(
      `${r.name.padEnd(22)}  ${`${Math.round(r.firstPlotMs)} ms`.padStart(10)}   ${`${Math.round(r.interactiveMs)} ms`.padStart(11)}   ${kib(r.bytes).padStart(11)}   ${kib(r.apiBytes).padStart(11)}   ${`${Math.round(r.againMs)} ms`.padStart(11)}   ${`${Math.round(r.againInteractiveMs)} ms`.padStart(11)}   ${kib(r.againBytes).padStart(11)}`,
    );
}
process.exit(0);
