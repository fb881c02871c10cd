/**
 * The linear driver: a linear-class run solved in pseudo-voltages
 * (linear.ts; docs/physics.md §3 Pseudo-voltages), one step per phase:
 *
 *   plan     = planLinear(net)          ordering, symbolic analysis         once per run
 *   L·Lᵀ     = A(point)                 conductances, numeric Cholesky      when rails, sizes, settings or the sample change
 *   û        = A⁻¹·b(point)             triangular solves or superposition  every point
 *   V        = Vref ∓ U_T·ln û          node voltages                       every point
 *   I, KCL   = evaluateLinear(û)        currents, flags, rail currents      every point
 *   refuse   when KCL error > KCL_LIMIT · largest current
 *
 * A range that starts inside a group of points sharing one factorisation
 * first replays the group's earlier points (factorisation and solves only,
 * nothing reported), so that every point sees the same factorisation and
 * superposition state as in the unsplit run.
 */

import type { Network } from "../lang/network";
import { evaluate } from "./evaluate";
import { factorLinear, type LinearPlan, planLinear, releaseLinear, solvePseudo, voltagesLinear } from "./linear";
import { evaluationProblem, evaluateLinear } from "./linear-eval";
import type { Evaluation, RunResult, SolverInfo } from "./results";
import { type FactorKey, factorKey, type Outcome, type Run, sameKey, SOLVED } from "./run";

export function linearRun(run: Run): RunResult {
  const plan = run.analyse(() => planLinear(run.net, run.cls, run.opts));
  if (!plan) return run.result;
  const t = run.timings;
  /** The key of the factorisation in plan (null: none usable). */
  let key: FactorKey | null = null;
  try {
    for (const at of run.points(groupStart(run))) {
      const t0 = performance.now();
      const P = run.deviceConstants(at);
      const k = factorKey(at);
      const reused = key !== null && plan.factored && sameKey(key, k);
      let outcome: Outcome = SOLVED;
      if (!reused) {
        const f = factorLinear(plan, at.net, P); //                      L·Lᵀ = A(point)
        key = f.ok ? k : null;
        outcome = f;
      }
      const t1 = performance.now();
      t.factorMs += t1 - t0;
      if (outcome.ok) solvePseudo(plan, at.net); //                      û = A⁻¹·b(point)
      const t2 = performance.now();
      t.solveMs += t2 - t1;
      if (at.replay) continue;
      const { V, store } = run.arrays();
      if (outcome.ok) outcome = voltagesLinear(plan, at.net, V); //      V = Vref ∓ U_T·ln û
      const ev = outcome.ok //                                           I, ic, saturation, rail currents, KCL
        ? evaluateLinear(plan, at.net, V, store)
        : evaluate(at.net, V, P, undefined, store);
      if (outcome.ok) outcome = refusal(plan, at.net, ev); //            KCL error ≤ KCL_LIMIT·I_max, or refused
      run.record(at, V, ev, outcome, solverInfo(run, plan, ev, reused), t2);
    }
  } finally {
    releaseLinear(plan);
  }
  return run.result;
}

/**
 * The point where the unsplit run last factors before the range's first
 * point: the first of the points before it whose factorisation keys equal its own.
 */
function groupStart(run: Run): number {
  let k = run.start;
  if (k === 0 || k >= run.end) return k;
  const key = factorKey(run.pointAt(k));
  while (k > 0 && sameKey(key, factorKey(run.pointAt(k - 1)))) k--;
  return k;
}

/** Currents out of range, or a KCL error beyond KCL_LIMIT: not a solution to report. */
function refusal(plan: LinearPlan, net: Network, ev: Evaluation): Outcome {
  const bad = evaluationProblem(plan, net, ev);
  return bad ? { ok: false, node: bad.node, message: bad.message } : SOLVED;
}

function solverInfo(run: Run, plan: LinearPlan, ev: Evaluation, reused: boolean): SolverInfo {
  return {
    method: "linear",
    iterations: 1,
    residual: ev.residual,
    reason: run.reason,
    ordering: plan.ordering,
    reusedFactor: reused,
  };
}
