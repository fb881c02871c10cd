/**
 * What a solve returns: a run's points as typed arrays, their solver figures
 * and validity warnings, per-probe summaries over mismatch samples, and the
 * run's phase timings. Types only: the evaluation that fills a point is in
 * evaluate.ts (voltage form) and linear-eval.ts (pseudo-voltage form), the
 * `solve --json` document in json.ts.
 *
 * Sign conventions (docs/language.md, Sign conventions): device current nfet drain→source, pfet
 * source→drain; a rail's current is what it delivers into the network; the
 * residual is the largest KCL error over internal nodes, in amperes.
 */

import type { Classification } from "./classify";
import type { PointExpectations } from "./expectations";

export type Method = "linear" | "newton";

export interface SolverInfo {
  method: Method;
  iterations: number;
  /** Largest KCL error over internal nodes, amperes, from the device equations in voltage form. */
  residual: number;
  /** Why this method: the classification reason. */
  reason: string;
  /** Fill-reducing ordering of the linear system (linear method), or of the Jacobian (Newton). */
  ordering?: string;
  /** Newton only: whether source-stepping continuation was needed. */
  continuation?: boolean;
  /** Linear only: whether this point reused the previous numeric factorisation. */
  reusedFactor?: boolean;
}

export type WarningKind = "junction" | "inversion" | "accuracy" | "unstable";

/** A validity warning, aggregated over devices of one point. */
export interface SolverWarning {
  kind: WarningKind;
  /** First device concerned. */
  device: number;
  /** How many devices. */
  count: number;
  /** Largest forward bias (junction, volts), inversion coefficient (inversion), KCL error relative to the largest current (accuracy); 0 (unstable). */
  worst: number;
  message: string;
}

/**
 * A point's result arrays: views into a slab shared by several retained
 * points, fresh arrays, or one set reused point after point when the run
 * streams its points (see run.ts). ic is null when the evaluation needs none
 * (no ispec).
 */
export interface PointStorage {
  currents: Float64Array;
  ic: Float64Array | null;
  saturated: Uint8Array;
  railCurrents: Float64Array;
}

export interface PointResult {
  /** Position in the run: grid point (outer sweep slowest) × sample. */
  index: number;
  /** Param values of this point (all params), plus temp when it is swept. */
  params: Record<string, number>;
  /** Mismatch sample 0..N-1, or null without mismatch. */
  sample: number | null;
  ok: boolean;
  /** When !ok: what failed, naming the node. */
  error: string | null;
  /** Node voltages (volts, every node; rails at their values). */
  voltages: Float64Array;
  /** Device currents (sign convention above). */
  currents: Float64Array;
  /** Inversion coefficient I_F/(ispec·W/L); NaN when not available (reported as null). */
  ic: Float64Array;
  /** 1 when V_DS > 4·U_T (pfet: V_SD). */
  saturated: Uint8Array;
  /** Per node: current a rail delivers into the network; NaN for internal nodes. */
  railCurrents: Float64Array;
  probes: Record<string, number>;
  /** Each expectation's verdict and margin at the point; null for a failed point or a network without any. */
  expectations: PointExpectations | null;
  solver: SolverInfo;
  warnings: SolverWarning[];
}

export interface ProbeSummary extends Distribution {
  probe: string;
  /** Index of the grid point (outer sweep slowest), and its params. */
  gridPoint: number;
  params: Record<string, number>;
  samples: number;
}

/** Mean, sample standard deviation, extremes and percentiles of a set of values. */
export interface Distribution {
  mean: number;
  std: number;
  min: number;
  max: number;
  /** Percentiles (linear interpolation between order statistics). */
  p1: number;
  p5: number;
  p50: number;
  p95: number;
  p99: number;
}

/** Milliseconds per phase, summed over the run's points. */
export interface RunTimings {
  /** Structure: graph, ordering, symbolic analysis (linear) or Jacobian pattern and ordering (Newton). */
  analyseMs: number;
  /** Linear: conductances and numeric factorisation (zero for a point that reuses it). Newton: the start. */
  factorMs: number;
  /** Linear: right-hand side and triangular solves (or superposition), up to the pseudo-voltages. Newton: the iterations. */
  solveMs: number;
  /** Linear: node voltages from the pseudo-voltages (a logarithm per node). Both: currents, inversion coefficients, rail currents, KCL residual, probes. */
  evaluateMs: number;
}

export interface RunResult {
  ok: boolean;
  /** Points in run order (only the retained ones when `keepPoints` is false). */
  points: PointResult[];
  /** Points solved (including failed ones). */
  solved: number;
  /** Points the run would have: grid points × samples (before maxPoints and range). */
  total: number;
  classification: Classification;
  method: Method;
  reason: string;
  /** One entry per failed point (or a structural problem, point -1). */
  failures: { point: number; node: number; message: string }[];
  /** Per probe and grid point, over mismatch samples (empty without mismatch). */
  summaries: ProbeSummary[];
  stopped: boolean;
  timings: RunTimings;
}

/** One point's evaluation: its arrays (those of its PointStorage), KCL residual and validity warnings. */
export interface Evaluation {
  currents: Float64Array;
  ic: Float64Array;
  saturated: Uint8Array;
  railCurrents: Float64Array;
  residual: number;
  /** Node with the largest KCL error (-1 if none). */
  worstNode: number;
  /** Largest |device current|. */
  maxCurrent: number;
  warnings: SolverWarning[];
}
