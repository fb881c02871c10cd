/**
 * The Runnel solver: pure TypeScript, no I/O (server, worker threads, CLI, tests).
 *
 *   classify(net)                       which method a network needs, and why
 *   solveNetwork(net, opts) → RunResult every point: sweep grid (outer first) × mismatch samples
 *   toSolveJson(net, diagnostics, run)  the LANGUAGE.md `solve --json` document
 *   NetworkBuilder                      networks in code (tests, benchmarks)
 */

export { classify, type Classification } from "./classify";
export { solveNetwork, sweepGrid, pointCount, type SolveOptions } from "./sweep";
export {
  toSolveJson,
  pointJson,
  evaluate,
  type PointResult,
  type RunResult,
  type RunTimings,
  type SolverInfo,
  type SolverWarning,
  type ProbeSummary,
  type SolveJson,
  type JsonPoint,
  type Method,
} from "./results";
export { NetworkBuilder, type Value, type Pin, type SweepSpec } from "./build";
export { DEFAULT_ORDERING, type OrderingChoice } from "./linear";
export { summarize } from "./mismatch";
