/**
 * Runnel benchmarks: `npm run bench [-- --json] [--only NAME] [--reps N] [--quick]`.
 *
 * Every workload is generated as .runnel TEXT with for-loops and goes through
 * the language's `elaborate()` (timed as elaborate_ms: this doubles as the
 * parse + elaborate benchmark), then `solveNetwork()` with points streamed,
 * not retained (one set of result arrays reused, as the run worker does).
 *
 * How a workload is timed: its text is elaborated `reps` times (the median is
 * elaborate_ms); the garbage of elaboration is then collected once, untimed
 * (this script re-runs itself with --expose-gc), and the network is solved
 * untimed until the compiled code is warm again (a forced collection throws
 * away compiled code and type feedback: the next solves ran up to 5× slower,
 * measured), at least twice and for at least 1.5 s; then `reps` timed solves
 * of that network. Nothing is cached between solves but compiled code and the
 * thread's work-array pool, so this is a server worker that has solved
 * before. `cold` is the same workload elaborated and solved once in a fresh
 * process (nothing compiled, no pool, elaboration's garbage still around:
 * what a first `runnel solve` pays). Phases are timed separately and summed over a sweep's points:
 *   analyse_ms  graph, fill-reducing ordering, symbolic analysis (Newton: Jacobian pattern, ordering)
 *   factor_ms   conductances and numeric factorisation (zero for points that reuse it)
 *   solve_ms    right-hand side, triangular solves or superposition, up to the pseudo-voltages (Newton: the iterations)
 *   evaluate_ms back to node voltages (a logarithm per node: linear only), currents, inversion
 *               coefficients, rail currents, KCL residual from the device equations
 * total_ms = elaborate_ms + wall time of solveNetwork; cpu_ms = process CPU
 * time of solveNetwork (a better estimate of the unloaded time when other work
 * shares the machine). Each number is the median of several runs. With
 * --json: one JSON array, an entry per workload.
 */

import { spawnSync } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import { cpus, loadavg } from "node:os";
import { elaborate } from "../src/lang/index";
import type { Network } from "../src/lang/network";
import { applyPoint } from "../src/lang/point";
import { solveNetwork, type SolveOptions } from "../src/solver/index";
import type { OrderingName } from "../src/solver/order";
import { chainText, gridText, meshText, mirrorText } from "./workloads";

/** Collects garbage when the script runs with --expose-gc (it re-runs itself so); never inside a timed region. */
function collect(): void {
  const g = (globalThis as { gc?: () => void }).gc;
  if (g) g();
}

interface Phases {
  elaborate_ms: number;
  analyse_ms: number;
  factor_ms: number;
  solve_ms: number;
  evaluate_ms: number;
}

interface Entry {
  workload: string;
  nodes: number;
  devices: number;
  points: number;
  phases: Phases;
  total_ms: number;
  cpu_ms: number;
  method: string;
  ordering: string;
  /** Newton iterations of the first point (1 for the linear method). */
  iterations: number;
  /** The workload solved once in a fresh process (same phases, and its peak resident memory; absent with --quick). */
  cold?: Cold;
  /** sweep_vh_grid64 only: its points solved one by one as 1,000 networks of their own, right after its timed runs (ms). */
  independent_ms?: number;
}

interface Cold {
  phases: Phases;
  total_ms: number;
  /** Peak resident set of that process (elaborate + solve), MB. */
  peak_rss_mb: number;
}

interface Workload {
  name: string;
  text: () => string;
  reps: number;
}

const WORKLOADS: Workload[] = [
  { name: "chain1e6", text: () => chainText(1_000_000), reps: 5 },
  { name: "grid256", text: () => gridText("grid256", 256), reps: 5 },
  { name: "grid512", text: () => gridText("grid512", 512), reps: 5 },
  { name: "sweep_vh_grid64", text: () => gridText("sweep_vh", 64, "sweep vh from 0.6 to 0.8 points 1000\n"), reps: 5 },
  {
    name: "sweep_inject_grid64",
    text: () => gridText("sweep_inject", 64, "sweep iin from 100p to 10n points 1000 log\n"),
    reps: 5,
  },
  { name: "mismatch200_grid64", text: () => gridText("mismatch200", 64, "mismatch runs 200 seed 1 avt 3m\n"), reps: 5 },
  { name: "newton_mirror1000", text: () => mirrorText(1000), reps: 5 },
  { name: "newton_mesh200", text: () => meshText(200), reps: 3 },
];

function median(xs: number[]): number {
  const s = xs.slice().sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

function elaborateOrThrow(text: string, name: string): { net: Network; ms: number } {
  const t0 = performance.now();
  const r = elaborate(text);
  const ms = performance.now() - t0;
  if (!r.network)
    throw new Error(
      `${name}: does not elaborate: ${r.diagnostics.map((d) => `${d.line}:${d.column} ${d.message}`).join("; ")}`,
    );
  return { net: r.network, ms };
}

interface Sample {
  phases: Phases;
  total: number;
  cpu: number;
  method: string;
  ordering: string;
  points: number;
  iterations: number;
}

function solveTimed(net: Network, elaborateMs: number, opts: SolveOptions = {}): Sample {
  let ordering = "";
  let iterations = 0;
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const run = solveNetwork(net, {
    ...opts,
    keepPoints: false,
    reuseArrays: true,
    onPoint: (p) => {
      if (!ordering) ordering = p.solver.ordering ?? "";
      if (!iterations) iterations = p.solver.iterations;
    },
  });
  const wall = performance.now() - t0;
  const cu = process.cpuUsage(c0);
  if (!run.ok) throw new Error(`solve failed: ${run.failures[0]?.message}`);
  const t = run.timings;
  return {
    phases: {
      elaborate_ms: elaborateMs,
      analyse_ms: t.analyseMs,
      factor_ms: t.factorMs,
      solve_ms: t.solveMs,
      evaluate_ms: t.evaluateMs,
    },
    total: elaborateMs + wall,
    cpu: (cu.user + cu.system) / 1000,
    method: run.method,
    ordering,
    points: run.solved,
    iterations,
  };
}

function medianSample(samples: Sample[]): Sample {
  const keys = Object.keys(samples[0].phases) as (keyof Phases)[];
  const phases = {} as Phases;
  for (const k of keys) phases[k] = median(samples.map((s) => s.phases[k]));
  return { ...samples[0], phases, total: median(samples.map((s) => s.total)), cpu: median(samples.map((s) => s.cpu)) };
}

function runWorkload(w: Workload, reps: number): { entry: Entry; net: Network } {
  const text = w.text();
  const elaborateMs: number[] = [];
  let net: Network | null = null;
  for (let r = 0; r < reps; r++) {
    net = null;
    const el = elaborateOrThrow(text, w.name);
    elaborateMs.push(el.ms);
    net = el.net;
  }
  const elab = median(elaborateMs);
  // Elaboration's garbage goes before any solve is timed; then warm the compiled code up again.
  collect();
  const warm = performance.now();
  for (let k = 0; k < 5 && (k < 2 || performance.now() - warm < 1500); k++) solveTimed(net as Network, 0);
  const samples: Sample[] = [];
  for (let r = 0; r < reps; r++) samples.push(solveTimed(net as Network, elab));
  const m = medianSample(samples);
  const n = net as Network;
  return {
    net: n,
    entry: {
      workload: w.name,
      nodes: n.nodes.names.length,
      devices: n.devices.count,
      points: m.points,
      phases: {
        elaborate_ms: round(m.phases.elaborate_ms),
        analyse_ms: round(m.phases.analyse_ms),
        factor_ms: round(m.phases.factor_ms),
        solve_ms: round(m.phases.solve_ms),
        evaluate_ms: round(m.phases.evaluate_ms),
      },
      total_ms: round(m.total),
      cpu_ms: round(m.cpu),
      method: m.method,
      ordering: m.ordering,
      iterations: m.iterations,
    },
  };
}

/** analyse + factor + solve of one network under a forced ordering (median of reps). */
function orderingCost(
  net: Network,
  ordering: OrderingName,
  reps: number,
): { analyse: number; factor: number; solve: number; sum: number } {
  const s: Sample[] = [];
  for (let r = 0; r < reps; r++) s.push(solveTimed(net, 0, { ordering }));
  const m = medianSample(s);
  const p = m.phases;
  return {
    analyse: p.analyse_ms,
    factor: p.factor_ms,
    solve: p.solve_ms,
    sum: p.analyse_ms + p.factor_ms + p.solve_ms,
  };
}

/** The vh sweep's points solved as independent networks: a fresh analysis every time. */
function independentSolves(net: Network): number {
  const sweep = net.sweeps[0];
  let total = 0;
  for (const v of sweep.values) {
    const single = { ...applyPoint(net, { [sweep.param]: v }), sweeps: [] };
    const t0 = performance.now();
    const run = solveNetwork(single, { keepPoints: false, reuseArrays: true });
    total += performance.now() - t0;
    if (!run.ok) throw new Error("independent solve failed");
  }
  return total;
}

/**
 * The least an inject sweep's point can cost here (µs, median): for `nodes`
 * nodes V = vref − U_T·ln(p0 + v·p1) and the KCL residual max|e0 + v·e1|, for
 * `devices` devices I = i0 + v·i1 and the flag (s0 + v·s1 < 0): the point's
 * voltages, currents, saturation flags and residual from superposed parts,
 * with no rail currents, probes or record. Three sets of arrays in turn, as a
 * run's arrays are not constants to the compiler either.
 */
function injectOutputFloor(nodes: number, devices: number): number {
  const set = () => ({
    p0: Float64Array.from({ length: nodes }, (_, k) => Math.exp(-10 - (k % 97) / 5)),
    p1: Float64Array.from({ length: nodes }, (_, k) => 1e3 * Math.exp(-10 - (k % 89) / 5)),
    V: new Float64Array(nodes),
    e0: Float64Array.from({ length: nodes }, (_, k) => 1e-25 * Math.sin(k)),
    e1: Float64Array.from({ length: nodes }, (_, k) => 1e-16 * Math.cos(k)),
    i0: Float64Array.from({ length: devices }, (_, d) => 1e-9 * Math.sin(d)),
    i1: Float64Array.from({ length: devices }, (_, d) => Math.cos(d)),
    s0: Float64Array.from({ length: devices }, (_, d) => (d % 3) - 1),
    s1: Float64Array.from({ length: devices }, (_, d) => Math.sin(3 * d)),
    I: new Float64Array(devices),
    sat: new Uint8Array(devices),
  });
  const sets = [set(), set(), set()];
  const point = (s: ReturnType<typeof set>, v: number): number => {
    const { p0, p1, V, e0, e1, i0, i1, s0, s1, I, sat } = s;
    let residual = 0;
    for (let k = 0; k < nodes; k++) {
      V[k] = 0.7 - 0.025 * Math.log(p0[k] + v * p1[k]);
      const e = Math.abs(e0[k] + v * e1[k]);
      if (e > residual) residual = e;
    }
    for (let d = 0; d < devices; d++) {
      I[d] = i0[d] + v * i1[d];
      sat[d] = s0[d] + v * s1[d] < 0 ? 1 : 0;
    }
    return residual;
  };
  let sink = 0;
  const run = (): number => {
    const t0 = performance.now();
    for (let j = 0; j < 1000; j++) sink += point(sets[j % 3], 1e-10 * (1 + j / 100));
    return performance.now() - t0;
  };
  for (let w = 0; w < 3; w++) run();
  const ms: number[] = [];
  for (let r = 0; r < 7; r++) ms.push(run());
  if (!Number.isFinite(sink)) throw new Error("injectOutputFloor: not finite");
  return median(ms);
}

/** The workload solved once in a fresh process (this script with --cold NAME). */
function coldRun(name: string): Cold | undefined {
  const r = spawnSync(process.execPath, [...process.execArgv, process.argv[1], "--cold", name], {
    encoding: "utf8",
    maxBuffer: 1 << 20,
  });
  if (r.status !== 0) {
    process.stderr.write(`bench: the cold run of ${name} failed: ${r.stderr}\n`);
    return undefined;
  }
  return JSON.parse(r.stdout) as Cold;
}

/**
 * Runnel's analyse + factor + solve against the CHOLMOD reference program
 * (built by bench/all.ts from $RUNNEL_ANCHORS/cholmod-ref.c; `bin`) on the
 * same matrices, back to back in this run: wall-clock medians of `reps`
 * solves each (both single-threaded), and the peak RSS of a CHOLMOD process
 * factoring grid 512 beside Runnel's cold process (measured with
 * /usr/bin/time when it exists).
 */
function cholmodComparison(bin: string, reps: number, entries: Entry[]): string[] {
  const out: string[] = [];
  const rows: string[] = [];
  const cases: [string, string, string][] = [64, 128, 256, 512].map((n) => [
    `grid ${n}`,
    `grid ${n}`,
    gridText(`grid${n}`, n),
  ]);
  cases.push(["chain 10^6", "chain 1000000", chainText(1_000_000)]);
  for (const [label, command, text] of cases) {
    const { net } = elaborateOrThrow(text, label);
    for (let k = 0; k < 2; k++) solveTimed(net, 0);
    const ours: number[] = [];
    for (let r = 0; r < reps; r++) {
      const p = solveTimed(net, 0).phases;
      ours.push(p.analyse_ms + p.factor_ms + p.solve_ms);
    }
    const ref = spawnSync(bin, { input: `${command}\n${"full\n".repeat(reps)}quit\n`, encoding: "utf8" });
    const lines = (ref.stdout ?? "").trim().split("\n").slice(1);
    const theirs = lines.map((l) => (JSON.parse(l) as { total: number }).total);
    if (ref.status !== 0 || theirs.length !== reps) {
      out.push(`(the CHOLMOD reference failed on ${label}: ${ref.stderr})`);
      continue;
    }
    const a = median(ours);
    const b = median(theirs);
    rows.push(
      `| ${label} | ${net.nodes.names.length.toLocaleString("en-US")} | ${fmt(a)} | ${fmt(b)} | ${(a / b).toFixed(2)}× |`,
    );
  }
  out.push(
    `Against CHOLMOD (${bin}, supernodal Cholesky, default ordering), analyse + factor + solve, wall-clock medians of ${reps}:`,
  );
  out.push("");
  out.push("| matrix | rows | Runnel (ms) | CHOLMOD (ms) | ratio |");
  out.push("|---|---:|---:|---:|---:|");
  out.push(...rows);
  out.push("");
  const time = "/usr/bin/time";
  const g512 = entries.find((e) => e.workload === "grid512");
  if (existsSync(time) && g512?.cold) {
    const r = spawnSync(time, ["-f", "%M", bin], { input: "grid 512\nfull\nquit\n", encoding: "utf8" });
    const kb = Number((r.stderr ?? "").trim().split("\n").at(-1));
    if (kb > 0)
      out.push(
        `Peak RSS, grid 512: Runnel ${fmt(g512.cold.peak_rss_mb)} MB (elaborate + solve, cold process) against CHOLMOD ${fmt(kb / 1024)} MB (its matrix, analysis and factor) = ${(g512.cold.peak_rss_mb / (kb / 1024)).toFixed(2)}×`,
        "",
      );
  }
  return out;
}

/**
 * This process's peak resident set, MB: VmHWM from /proc/self/status (getrusage's maxrss would also count the
 * parent's memory at the fork that started this process, which survives exec on Linux), else maxrss.
 */
export function peakRssMb(): number {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync("/proc/self/status", "utf8"));
    if (m) return Number(m[1]) / 1024;
  } catch {
    // not Linux
  }
  return process.resourceUsage().maxRSS / 1024;
}

function round(x: number): number {
  return Math.round(x * 100) / 100;
}

function main(argv: string[]): number {
  const coldAt = argv.indexOf("--cold");
  if (coldAt >= 0) {
    const w = WORKLOADS.find((x) => x.name === argv[coldAt + 1]);
    if (!w) return 2;
    const el = elaborateOrThrow(w.text(), w.name);
    const s = solveTimed(el.net, el.ms);
    const phases = {} as Phases;
    for (const k of Object.keys(s.phases) as (keyof Phases)[]) phases[k] = round(s.phases[k]);
    const cold: Cold = { phases, total_ms: round(s.total), peak_rss_mb: round(peakRssMb()) };
    process.stdout.write(JSON.stringify(cold));
    return 0;
  }
  const json = argv.includes("--json");
  const quick = argv.includes("--quick");
  const onlyAt = argv.indexOf("--only");
  const only = onlyAt >= 0 ? argv[onlyAt + 1] : null;
  const repsAt = argv.indexOf("--reps");
  const repsOverride = repsAt >= 0 ? Number(argv[repsAt + 1]) : null;
  if (only !== null && !WORKLOADS.some((w) => w.name === only)) {
    process.stderr.write(`bench: unknown workload '${only}' (one of ${WORKLOADS.map((w) => w.name).join(", ")})\n`);
    return 2;
  }
  if (repsOverride !== null && !(Number.isInteger(repsOverride) && repsOverride >= 1)) {
    process.stderr.write("bench: --reps needs a positive integer\n");
    return 2;
  }
  const selected = WORKLOADS.filter((w) => only === null || w.name === only);
  const entries: Entry[] = [];
  const nets = new Map<string, Network>();
  for (const w of selected) {
    const reps = repsOverride ?? (quick ? 1 : w.reps);
    const cold = quick ? undefined : coldRun(w.name);
    const { entry, net } = runWorkload(w, reps);
    if (cold) entry.cold = cold;
    // The vh goal's baseline, measured in the same state of the process as the sweep itself.
    if (w.name === "sweep_vh_grid64") entry.independent_ms = round(independentSolves(net));
    entries.push(entry);
    nets.set(w.name, net);
    if (!json) process.stderr.write(`  ${w.name}: ${entry.total_ms.toFixed(0)} ms\n`);
  }
  if (json) {
    process.stdout.write(`${JSON.stringify(entries, null, 2)}\n`);
    return 0;
  }
  printTable(entries, nets, quick);
  return 0;
}

function fmt(x: number): string {
  return x >= 100 ? x.toFixed(0) : x >= 10 ? x.toFixed(1) : x.toFixed(2);
}

function printTable(entries: Entry[], nets: Map<string, Network>, quick: boolean): void {
  const cpu = cpus();
  const out: string[] = [];
  const load = loadavg();
  out.push(
    `Machine: ${cpu[0]?.model ?? "unknown cpu"}, ${cpu.length} cores, node ${process.version}; load average ${load.map((x) => x.toFixed(1)).join(" ")} (other work on the machine inflates wall times)`,
  );
  out.push(
    "Medians of several timed runs after one untimed run (ms); sweep phases summed over points; total = elaborate + solveNetwork wall time.",
  );
  out.push("");
  out.push(
    "| workload | nodes | devices | points | method | iterations | ordering | elaborate | analyse | factor | solve | evaluate | total | solve CPU |",
  );
  out.push("|---|---:|---:|---:|---|---:|---|---:|---:|---:|---:|---:|---:|---:|");
  for (const e of entries) {
    const p = e.phases;
    out.push(
      `| ${e.workload} | ${e.nodes.toLocaleString("en-US")} | ${e.devices.toLocaleString("en-US")} | ${e.points} | ${e.method} | ${e.iterations} | ${e.ordering} | ${fmt(p.elaborate_ms)} | ${fmt(p.analyse_ms)} | ${fmt(p.factor_ms)} | ${fmt(p.solve_ms)} | ${fmt(p.evaluate_ms)} | ${fmt(e.total_ms)} | ${fmt(e.cpu_ms)} |`,
    );
  }
  out.push("");
  if (entries.some((e) => e.cold)) {
    out.push(
      "Cold: each workload elaborated and solved once in a fresh process (no compiled code, no pooled work arrays); peak RSS of that process:",
    );
    out.push("");
    out.push("| workload | analyse | factor | solve | evaluate | analyse + factor + solve | total | peak RSS (MB) |");
    out.push("|---|---:|---:|---:|---:|---:|---:|---:|");
    for (const e of entries) {
      if (!e.cold) continue;
      const p = e.cold.phases;
      out.push(
        `| ${e.workload} | ${fmt(p.analyse_ms)} | ${fmt(p.factor_ms)} | ${fmt(p.solve_ms)} | ${fmt(p.evaluate_ms)} | ${fmt(p.analyse_ms + p.factor_ms + p.solve_ms)} | ${fmt(e.cold.total_ms)} | ${fmt(e.cold.peak_rss_mb)} |`,
      );
    }
    out.push("");
  }
  const by = new Map(entries.map((e) => [e.workload, e]));
  const solver = (e: Entry) => e.phases.analyse_ms + e.phases.factor_ms + e.phases.solve_ms;
  const goals: string[] = [];
  const g256 = by.get("grid256");
  if (g256)
    goals.push(
      `grid256: analyse + factor + solve = ${fmt(solver(g256))} ms (goal ≤ 285 ms): ${solver(g256) <= 285 ? "met" : "NOT met"}`,
    );
  const ch = by.get("chain1e6");
  if (ch)
    goals.push(
      `chain1e6: analyse + factor + solve = ${fmt(solver(ch))} ms (goal ≤ 60 ms): ${solver(ch) <= 60 ? "met" : "NOT met"}`,
    );
  const vh = by.get("sweep_vh_grid64");
  if (vh && vh.independent_ms !== undefined) {
    // One run of 1,000 independent solves (itself an aggregate of 1,000 timings), right after the sweep's runs.
    const base = vh.independent_ms;
    const sweepSolve = vh.total_ms - vh.phases.elaborate_ms;
    goals.push(
      `sweep_vh_grid64: ${fmt(sweepSolve)} ms against ${fmt(base)} ms for 1,000 independent solves = ${(sweepSolve / base).toFixed(3)}× (goal ≤ 0.25×): ${sweepSolve / base <= 0.25 ? "met" : "NOT met"}`,
    );
  }
  const inj = by.get("sweep_inject_grid64");
  if (vh && inj) {
    const total = (vh.total_ms - vh.phases.elaborate_ms) / (inj.total_ms - inj.phases.elaborate_ms);
    const solverOnly = solver(vh) / solver(inj);
    goals.push(
      `sweep_inject_grid64 vs sweep_vh_grid64: ${total.toFixed(1)}× faster in total, ${solverOnly.toFixed(1)}× in analyse + factor + solve (goal ≥ 20×): ${total >= 20 ? "met" : solverOnly >= 20 ? "met for the solver phases only" : "NOT met"}`,
    );
    if (vh.independent_ms !== undefined) {
      // Both sweep goals at once: inject ≤ vh / 20 ≤ (0.25 · independent) / 20 = independent / 80.
      const cap = (1000 * vh.independent_ms) / 80 / inj.points;
      const perPoint = (1000 * (inj.total_ms - inj.phases.elaborate_ms)) / inj.points;
      const floor = injectOutputFloor(inj.nodes, inj.devices);
      goals.push(
        `both sweep goals together need an inject point in ≤ ${fmt(cap)} µs (1/80 of an independent solve); it takes ${fmt(perPoint)} µs, and writing its outputs alone (a logarithm and the KCL residual per node, a current and a saturation flag per device, each from its superposed parts, nothing else) takes ${fmt(floor)} µs here`,
      );
    }
  }
  const mesh = by.get("newton_mesh200");
  if (mesh)
    goals.push(
      `newton_mesh200 (40,000 rows): ${mesh.iterations} Newton iterations in ${fmt(mesh.phases.solve_ms)} ms = ${fmt(mesh.phases.solve_ms / mesh.iterations)} ms per iteration (assembly, supernodal LU refactorisation, solve, convergence test); analysis once ${fmt(mesh.phases.analyse_ms)} ms`,
    );
  if (goals.length) {
    out.push("Goals:");
    for (const g of goals) out.push(`- ${g}`);
    out.push("");
  }
  const bin = process.env.RUNNEL_CHOLMOD_REF;
  if (bin && !quick) out.push(...cholmodComparison(bin, 5, entries));
  else if (process.env.RUNNEL_CHOLMOD_SKIP)
    out.push(`CHOLMOD comparison skipped: ${process.env.RUNNEL_CHOLMOD_SKIP}`, "");
  // Ordering comparison on the big linear workloads (forced orderings).
  const cmp: string[] = [];
  for (const name of ["grid256", "grid512", "chain1e6"]) {
    const net = nets.get(name);
    if (!net) continue;
    const reps = quick ? 1 : name === "chain1e6" ? 2 : 3;
    for (const o of (name === "chain1e6" ? ["natural", "amd", "nd"] : ["amd", "nd"]) as OrderingName[]) {
      const c = orderingCost(net, o, reps);
      cmp.push(`| ${name} | ${o} | ${fmt(c.analyse)} | ${fmt(c.factor)} | ${fmt(c.solve)} | ${fmt(c.sum)} |`);
    }
  }
  if (cmp.length) {
    out.push("Orderings (forced; analyse includes the ordering itself):");
    out.push("");
    out.push("| workload | ordering | analyse | factor | solve | sum |");
    out.push("|---|---|---:|---:|---:|---:|");
    out.push(...cmp);
  }
  process.stdout.write(`${out.join("\n")}\n`);
}

if ((globalThis as { gc?: unknown }).gc === undefined && !process.env.RUNNEL_BENCH_CHILD) {
  // Re-run with --expose-gc, so that elaboration's garbage is collected before the solves are timed.
  const r = spawnSync(
    process.execPath,
    [...process.execArgv, "--expose-gc", process.argv[1], ...process.argv.slice(2)],
    {
      stdio: "inherit",
      env: { ...process.env, RUNNEL_BENCH_CHILD: "1" },
    },
  );
  process.exitCode = r.status ?? 1;
} else {
  process.exitCode = main(process.argv.slice(2));
}
