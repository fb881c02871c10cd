/**
 * The Runnel solver: pure TypeScript, no I/O (server, worker threads, CLI, tests).
 *
 *   classify(net)                       which method a network needs, and why
 *   solveNetwork(net, opts) → RunResult every point (or a range): sweep grid (outer first) × mismatch samples
 *   toSolveJson(net, diagnostics, run)  the `solve --json` document of docs/language.md
 */

export { classify, type Classification } from "./classify";
export { solveNetwork, sweepGrid, pointCount, type SolveOptions } from "./sweep";
export { evaluate } from "./evaluate";
export type { PointResult, RunResult, RunTimings, SolverInfo, SolverWarning, ProbeSummary, Method } from "./results";
export { toSolveJson, pointJson, summarizeExpectations, type SolveJson, type JsonPoint } from "./json";
export { evaluateExpectations, type PointExpectations } from "./expectations";
export {
  ExpectationTally,
  expectationJson,
  wilsonInterval,
  type ExpectationJson,
  type ExpectationSummary,
  type FirstFailure,
  type YieldEstimate,
} from "./expectation-summary";
export { DEFAULT_ORDERING, type OrderingChoice } from "./linear";
export { summarize } from "./mismatch";
export {
  adjointPoint,
  probeSensitivities,
  paramSensitivities,
  mismatchBudget,
  pelgromSigma,
  namePattern,
  type AdjointPoint,
  type ProbeSensitivity,
  type MismatchBudget,
  type BudgetEntry,
} from "./sensitivity";
