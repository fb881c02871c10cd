/**
 * The direct side of bench/api-sweep.ts: elaborates and solves a network's text
 * in this process, as a program calling the library would (no database, no
 * server), `--repeat` times after one untimed warm-up, and prints one JSON line
 * with the wall and CPU times (ms) of each repeat. Bundled by esbuild and run
 * as plain JavaScript, as the server's run worker is.
 *
 * Usage: node .build/bench-sweep-direct.mjs FILE.runnel [--repeat N]
 */
import fs from "node:fs";
import { elaborate } from "@/src/lang/index";
import { solveNetwork } from "@/src/solver/index";

const argv = process.argv.slice(2);
const text = fs.readFileSync(argv[0], "utf8");
const repeat = argv.includes("--repeat") ? Number(argv[argv.indexOf("--repeat") + 1]) : 3;

function once(): { wall: number; cpu: number; elaborate: number; points: number } {
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const net = elaborate(text).network;
  if (!net) throw new Error("the bench network does not elaborate");
  const t1 = performance.now();
  let points = 0;
  solveNetwork(net, { keepPoints: false, reuseArrays: true, onPoint: () => void points++ });
  const wall = performance.now() - t0;
  const c = process.cpuUsage(c0);
  return { wall, cpu: (c.user + c.system) / 1000, elaborate: t1 - t0, points };
}

once();
const runs = Array.from({ length: repeat }, once);
console.log(JSON.stringify(runs));
