/**
 * A run: every point of a network — the grid of `sweep` statements (first
 * sweep outermost, `temp` included) × mismatch samples — solved with the
 * method its classification calls for. `solveNetwork` checks what refuses a
 * run as a whole and hands it to one of two drivers, each a list of phases:
 * run-linear.ts (one sparse symmetric solve per point in pseudo-voltages) and
 * run-newton.ts (damped Newton on node voltages). Both reuse work across
 * points: the structure once per run, the numeric factorisation while only
 * inject values change (linear), the previous point's solution as the next
 * start (Newton).
 */

import type { Network } from "../lang/network";
import { classify } from "./classify";
import type { LinearOptions } from "./linear";
import type { PointResult, RunResult } from "./results";
import { Run } from "./run";
import { linearRun } from "./run-linear";
import { newtonRun } from "./run-newton";

export { pointCount, sweepGrid } from "./run";

export interface SolveOptions extends LinearOptions {
  /** Called after each point with (points done, points this call solves). */
  onProgress?(done: number, total: number): void;
  /** Solve at most this many points (in run order, from the range's start). */
  maxPoints?: number;
  /**
   * Solve only the points [start, end) of the run order (grid point × N
   * mismatch samples + sample; defaults: the whole run), e.g. one chunk of a
   * run split across workers. Each point keeps its index in the whole run,
   * and mismatch summaries cover only grid points whose samples all lie in
   * the range. Results do not depend on the split: a linear range first
   * replays, without reporting them, the points since the unsplit run's last
   * factorisation (the factorisation and the superposition state shape the
   * rounding); a mismatch sample draws from its own stream. A Newton range's
   * first point starts from the network's own start (see run-newton.ts), not
   * from the previous range's last solution, so it agrees with the unsplit
   * run within Newton's tolerance, not to the last bit.
   */
  range?: { start?: number; end?: number };
  /** Polled before each point; true ends the run early (`stopped`). */
  shouldStop?(): boolean;
  /** Called with each point as it is solved (also when keepPoints is false). */
  onPoint?(point: PointResult): void;
  /** Keep every point in RunResult.points (default true). */
  keepPoints?: boolean;
  /**
   * With keepPoints false: hand every point the same result arrays, overwritten
   * by the next point and reused by other runs once this one ends (onPoint must
   * copy what it keeps). Saves allocating and collecting a point's arrays
   * (e.g. 165 kB for a 64 × 64 grid) per point.
   */
  reuseArrays?: boolean;
  /** "newton" solves linear-class networks by Newton too (for cross-checks). */
  method?: "auto" | "newton";
  /** Newton: go straight to source stepping (for tests of the continuation). */
  forceContinuation?: boolean;
}

/** Solves every point of `net` (see the module comment). Never throws for a bad network: failures are in the result. */
export function solveNetwork(net: Network, opts: SolveOptions = {}): RunResult {
  const cls = classify(net);
  const newton = !cls.linear || opts.method === "newton";
  const reason = cls.linear && newton ? `${cls.reason} (Newton requested)` : cls.reason;
  const run = new Run(net, cls, newton ? "newton" : "linear", reason, opts);
  if (cls.problems.length > 0) {
    for (const p of cls.problems) run.refuse(p.message, p.node);
    return run.result;
  }
  if (net.settings.model === "ekv" && (net.settings.ispec === null || net.settings.vt0 === null))
    return run.refuse("set model = ekv needs both set ispec and set vt0");
  try {
    return newton ? newtonRun(run) : linearRun(run);
  } finally {
    run.close();
  }
}
