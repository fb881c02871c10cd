/**
 * A run's plan, made once when the run is queued: its size, its layout and
 * model figures, and its split into chunks from a cost estimate. Pure: the
 * caller elaborates (on the request thread today; any thread can call this).
 *
 * Chunks: about CHUNK_TARGET_MS of solving each (0.5–2 s is the aim: long
 * enough that a chunk's setup — elaboration cached per thread, the solver's
 * analysis — and the queue's hand-over stay small beside it, short enough that
 * the work spreads and a fair queue can interleave runs), and at least one per
 * worker once every chunk would still get CHUNK_MIN_MS; a run of fewer than
 * eight chunks per worker gets a multiple of the workers. The estimate only
 * shapes the split: results do not depend on it.
 */
import type { Network } from "@/src/lang/index";
import { classify, pointCount } from "@/src/solver/index";
import { layoutOf, valuesPerPoint, type RunLayout } from "./results";
import type { ChunkRange } from "./run-chunk";

export const CHUNK_TARGET_MS = 1_000;
export const CHUNK_MIN_MS = 250;
/** Most chunks a run is split into. */
export const MAX_CHUNKS = 2_000;

export interface RunPlan {
  points: number;
  valuesPerPoint: number;
  layout: RunLayout;
  model: Record<string, unknown>;
  /** Estimated solving time of one point, milliseconds on one core. */
  pointMs: number;
  chunks: ChunkRange[];
}

/** `extraPointMs`: time a test hook adds to every point ("slow": 25 ms), so that such runs split too. */
export function planRun(net: Network, workers: number, extraPointMs = 0): RunPlan {
  const points = pointCount(net);
  const pointMs = pointCostMs(net) + extraPointMs;
  return {
    points,
    valuesPerPoint: valuesPerPoint(net),
    layout: layoutOf(net),
    model: modelOf(net),
    pointMs,
    chunks: chunkRanges(points, pointMs, workers),
  };
}

/**
 * Estimated milliseconds to solve one point on one core, from the network's size and solver. Calibrated on the
 * bench's networks on the development machine (README, Performance): a 64 × 64 grid (4,096 nodes, about 8,000
 * devices) takes about 1.5 ms a point by the linear path when each point refactors; Newton points cost tens of
 * linear points (several iterations, each an LU).
 */
export function pointCostMs(net: Network): number {
  const size = net.nodes.names.length + net.devices.count;
  const linear = classify(net).linear && net.settings.model !== "ekv";
  return linear ? 0.02 + 1.3e-4 * size : 0.2 + 4e-3 * size;
}

/** Splits points [0, points) into near-equal chunks (see the module comment). */
export function chunkRanges(points: number, pointMs: number, workers: number): ChunkRange[] {
  if (points <= 0) return [{ start: 0, end: 0 }];
  const total = points * pointMs;
  let n = Math.ceil(total / CHUNK_TARGET_MS);
  n = Math.max(n, Math.min(workers, Math.floor(total / CHUNK_MIN_MS)));
  // A few chunks: a whole number per worker, so no thread idles through the last round (5 chunks on 2 threads
  // took 3 rounds: a 2,000-sample Monte Carlo ran 1.42× faster on 2 threads than on 1; 6 take 3 rounds of 2).
  if (n > 1 && n < 8 * workers) n = Math.ceil(n / workers) * workers;
  n = Math.max(1, Math.min(n, points, MAX_CHUNKS));
  const out: ChunkRange[] = [];
  for (let i = 0; i < n; i++)
    out.push({ start: Math.floor((i * points) / n), end: Math.floor(((i + 1) * points) / n) });
  return out;
}

/** The model figures a result page states. */
export function modelOf(net: Network): Record<string, unknown> {
  const s = net.settings;
  return {
    model: s.model,
    kappa: s.kappa,
    temp: s.temp,
    ut: s.ut,
    i0: s.i0,
    vt0: s.vt0,
    ispec: s.ispec,
    devices: net.devices.count,
    nodes: net.nodes.names.length,
  };
}
