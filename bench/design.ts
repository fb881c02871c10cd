/**
 * Design tools benchmark (part of `npm run bench`; alone: `npx tsx bench/design.ts [--reps N]`):
 *
 * 1. Sensitivities on grid256 (196,096 devices): 10 probes (device currents around the spot), each
 *    differentiated with respect to every device's W/L and threshold by one adjoint solve with the run's
 *    own factor (src/solver/sensitivity.ts), against one solve of that network (solveNetwork: analyse +
 *    factor + solve + evaluate). Goal: the sensitivities take ≤ 2× one solve. Finite differences would
 *    need 2 × 196,096 solves.
 * 2. Goal-seek of the space constant on a 1,000-tap row (Brent's method, src/solver/goal-seek.ts): its
 *    solves and time against the 200-point sweep of the same param that a designer would read it off.
 *
 * Medians of `reps` runs after a warm-up run; wall time (other work on the machine inflates it).
 */
import { cpus, loadavg } from "node:os";
import { elaborate } from "../src/lang/index";
import type { Network } from "../src/lang/network";
import { solveNetwork } from "../src/solver/index";
import { goalSeek } from "../src/solver/goal-seek";
import { adjointPoint, probeSensitivities } from "../src/solver/sensitivity";
import { gridText } from "./workloads";

const args = process.argv.slice(2);
const repsAt = args.indexOf("--reps");
const REPS = repsAt >= 0 ? Number(args[repsAt + 1]) : 5;

function build(text: string): Network {
  const r = elaborate(text);
  if (!r.network) throw new Error(r.diagnostics.map((d) => d.message).join("\n"));
  return r.network;
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

function timed(f: () => void): number {
  const t0 = performance.now();
  f();
  return performance.now() - t0;
}

function measure(f: () => void): number {
  f();
  const t: number[] = [];
  for (let k = 0; k < REPS; k++) t.push(timed(f));
  return median(t);
}

const fmt = (ms: number) => (ms >= 100 ? ms.toFixed(0) : ms.toPrecision(3));

// 1. grid256: 10 probes on output currents near the spot.
const c = 128;
const probes = Array.from({ length: 10 }, (_, k) => `probe p${k} = current(o${c}_${c + k})`).join("\n");
const grid = build(`${gridText("grid256", 256)}${probes}\n`);
const solveMs = measure(() => {
  solveNetwork(grid, { keepPoints: false, reuseArrays: true });
});
let adjointSolveMs = 0;
const sensMs = measure(() => {
  let at: ReturnType<typeof adjointPoint> | null = null;
  adjointSolveMs = timed(() => {
    at = adjointPoint(grid);
  });
  const r = at as unknown as ReturnType<typeof adjointPoint>;
  if (!r.ok) throw new Error(r.message);
  probeSensitivities(r.point);
  r.point.release();
});
const extraMs = sensMs - adjointSolveMs;

// 2. A 1,000-tap row: the lateral gate giving a space constant of 20 taps, read on taps 100…200 (input at 50).
const N = 1000;
let row = "network row1000\nparam vh = 0.7\nrail gh = vh\nrail gv = 0.6\nrail vd = 1.8\nrail gnd = 0\n";
row += `for k in 0..${N - 1} {\n  nfet out{k} gate=gv source=x{k} drain=vd\n}\n`;
row += `for k in 0..${N - 2} {\n  nfet lat{k} gate=gh source=x{k} drain=x{k+1}\n}\n`;
row += "inject iin from=x50 to=gnd value=1n\n";
row += `probe lambda = space_constant(${Array.from({ length: 101 }, (_, k) => `current(out${100 + k})`).join(", ")})\n`;
const rowNet = build(row);
let iterations = 0;
let found = NaN;
const seekMs = measure(() => {
  const r = goalSeek(rowNet, { param: "vh", low: 0.6, high: 0.9, probe: "lambda", target: 20 });
  if (!r.ok) throw new Error(r.message);
  iterations = r.iterations;
  found = r.value;
});
const sweepNet = build(`${row}sweep vh from 0.6 to 0.9 points 200\n`);
const sweepMs = measure(() => {
  solveNetwork(sweepNet, { keepPoints: false, reuseArrays: true });
});

const load = loadavg()
  .map((x) => x.toFixed(1))
  .join(" ");
console.log(`Design tools (bench/design.ts), medians of ${REPS} after a warm-up, wall time:`);
console.log(
  `Machine: ${cpus()[0]?.model.split(" ")[0] ?? "?"}, ${cpus().length} cores, node ${process.version}; load average ${load}`,
);
console.log(`grid256 (${grid.devices.count.toLocaleString("en-US")} devices), 10 probes:`);
console.log(`  one solve (solveNetwork)                     ${fmt(solveMs)} ms`);
console.log(
  `  sensitivities w.r.t. every W/L and VT         ${fmt(extraMs)} ms beyond the point's own solve (${fmt(adjointSolveMs)} ms)`,
);
console.log(
  `  ratio ${(extraMs / solveMs).toFixed(2)}× one solve (goal ≤ 2×): ${extraMs <= 2 * solveMs ? "met" : "NOT met"}; finite differences: ${(2 * grid.devices.count).toLocaleString("en-US")} solves`,
);
console.log(`row of ${N} taps, space constant 20 taps (vh = ${found.toFixed(6)} V):`);
console.log(`  goal-seek (Brent)                            ${fmt(seekMs)} ms, ${iterations} solves`);
console.log(`  200-point sweep of vh                        ${fmt(sweepMs)} ms`);
