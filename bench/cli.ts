/**
 * End to end: `runnel solve FILE --json > out.json` as a user runs it, each a
 * cold process (nothing compiled, nothing cached but the bundle on disk),
 * stdout to a file. Per workload, medians of REPS: wall time and CPU time of
 * the process, its peak resident set, the same command without `--json`
 * (elaborate + solve + a summary line: the rest is what printing costs), and
 * one run through `npm run --silent runnel` (npm's own start included).
 * `npx tsx bench/cli.ts [--json] [--reps N]`; `npm run bench` runs it.
 */
import { spawnSync } from "node:child_process";
import { closeSync, mkdirSync, openSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { cpus, loadavg } from "node:os";
import path from "node:path";
import { freshBundle } from "../scripts/lib/bundle.mjs";
import { chainText, gridText } from "./workloads";

const args = process.argv.slice(2);
const repsAt = args.indexOf("--reps");
const REPS = repsAt >= 0 ? Number(args[repsAt + 1]) : 3;
const dir = path.resolve(".build/bench-cli");
mkdirSync(dir, { recursive: true });

interface Usage {
  wall_ms: number;
  cpu_ms: number;
  peak_rss_mb: number;
}

function median(xs: number[]): number {
  const s = xs.slice().sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** One cold command, stdout to `outFile`. */
function once(argv: string[], outFile: string): Usage {
  const usageFile = path.join(dir, "usage.json");
  const fd = openSync(outFile, "w");
  const t0 = performance.now();
  const r = spawnSync(process.execPath, ["bench/cli-usage.mjs", usageFile, ...argv], { stdio: ["ignore", fd, "pipe"] });
  const wall = performance.now() - t0;
  closeSync(fd);
  if (r.status !== 0) throw new Error(`runnel ${argv.join(" ")} exited ${r.status}: ${r.stderr}`);
  const u = JSON.parse(readFileSync(usageFile, "utf8")) as {
    userCPUTime: number;
    systemCPUTime: number;
    maxRSS: number;
  };
  return { wall_ms: wall, cpu_ms: (u.userCPUTime + u.systemCPUTime) / 1000, peak_rss_mb: u.maxRSS / 1024 };
}

function medianUsage(us: Usage[]): Usage {
  return {
    wall_ms: median(us.map((u) => u.wall_ms)),
    cpu_ms: median(us.map((u) => u.cpu_ms)),
    peak_rss_mb: median(us.map((u) => u.peak_rss_mb)),
  };
}

const WORKLOADS: [string, () => string][] = [
  ["grid256", () => gridText("grid256", 256)],
  ["chain1e6", () => chainText(1_000_000)],
];

await freshBundle("scripts/runnel.ts", ".build/runnel.mjs");
const results = [];
for (const [name, text] of WORKLOADS) {
  const file = path.join(dir, `${name}.runnel`);
  writeFileSync(file, text());
  const out = path.join(dir, `${name}.json`);
  const json: Usage[] = [];
  const summary: Usage[] = [];
  for (let r = 0; r < REPS; r++) {
    json.push(once(["solve", file, "--json"], out));
    summary.push(once(["solve", file], path.join(dir, `${name}.txt`)));
  }
  const fd = openSync(out, "w");
  const t0 = performance.now();
  const npm = spawnSync("npm", ["run", "--silent", "runnel", "--", "solve", file, "--json"], {
    stdio: ["ignore", fd, "pipe"],
  });
  const npmWall = performance.now() - t0;
  closeSync(fd);
  if (npm.status !== 0) throw new Error(`npm run runnel failed: ${npm.stderr}`);
  results.push({
    workload: name,
    output_mb: statSync(out).size / 1e6,
    json: medianUsage(json),
    summary: medianUsage(summary),
    npm_wall_ms: npmWall,
  });
  if (!args.includes("--json"))
    process.stderr.write(`  cli ${name}: ${median(json.map((u) => u.wall_ms)).toFixed(0)} ms\n`);
}

if (args.includes("--json")) process.stdout.write(`${JSON.stringify(results, null, 2)}\n`);
else {
  const f = (x: number) => (x >= 100 ? x.toFixed(0) : x.toFixed(1));
  const lines = [
    `Command line, end to end (bench/cli.ts): each run a cold process, stdout to a file; medians of ${REPS}. Machine: ${cpus()[0]?.model ?? "cpu"}, ${cpus().length} cores, node ${process.version}; load average ${loadavg()
      .map((x) => x.toFixed(1))
      .join(" ")}.`,
    "",
    "| workload | output (MB) | solve --json: wall | CPU | peak RSS (MB) | without --json: wall | CPU | printing (CPU) | through npm run: wall |",
    "|---|---:|---:|---:|---:|---:|---:|---:|---:|",
    ...results.map(
      (r) =>
        `| ${r.workload} | ${f(r.output_mb)} | ${f(r.json.wall_ms)} | ${f(r.json.cpu_ms)} | ${f(r.json.peak_rss_mb)} | ${f(r.summary.wall_ms)} | ${f(r.summary.cpu_ms)} | ${f(r.json.cpu_ms - r.summary.cpu_ms)} | ${f(r.npm_wall_ms)} |`,
    ),
  ];
  process.stdout.write(`${lines.join("\n")}\n`);
}
