/**
 * The Newton driver: a run outside the linear class (or with the EKV model)
 * solved by damped Newton on node voltages (newton.ts), one step per phase:
 *
 *   plan   = planNewton(net)                Jacobian pattern, column ordering   once per run
 *   V₀     = previous point's V, or start   warm start along the run
 *   V      = V₀ − Σ λ·J⁻¹F                  damped Newton, source stepping      every point
 *            (again from the start when the warm start fails)
 *   I, KCL = evaluate(V)                    currents, flags, rail currents      every point
 *   warn   when KCL error > KCL_LIMIT · largest current
 *
 * The start of a point that has no solved point before it in this call — the
 * run's first point, the first point of a range, or one after a failure — is
 * the network's own start (`startNewton`): rail averages, or the
 * weak-inversion linear solution when only the EKV model breaks linearity.
 * So a range's first point does not warm-start from the previous range: it
 * agrees with the unsplit run within Newton's tolerance (STEP_TOL, newton.ts).
 */

import type { Network } from "../lang/network";
import { type Classification, classify } from "./classify";
import { deviceParams } from "./device";
import { currentScale, evaluate, firstDeviceAt, KCL_LIMIT } from "./evaluate";
import { factorLinear, planLinear, releaseLinear, solveLinear } from "./linear";
import { initialGuess, solveNewton, planNewton } from "./newton";
import type { Evaluation, RunResult, SolverWarning } from "./results";
import { type Outcome, type Run, SOLVED } from "./run";

export function newtonRun(run: Run): RunResult {
  const plan = run.analyse(() => planNewton(run.net));
  if (!plan) return run.result;
  const t = run.timings;
  const kcl = new Float64Array(run.net.nodes.names.length);
  const force = { forceContinuation: run.opts.forceContinuation };
  /** The last solved point's voltages: the next point's start. */
  let previous: Float64Array | null = null;
  for (const at of run.points(run.start)) {
    const t0 = performance.now();
    const P = run.deviceConstants(at);
    const { V, store } = run.arrays();
    if (previous)
      V.set(previous); //                                V₀ = previous solution
    else startNewton(at.net, run.cls, V); //                         V₀ = the network's own start
    const t1 = performance.now();
    t.factorMs += t1 - t0;
    let r = solveNewton(plan, at.net, P, V, force); //              V = V₀ − Σ λ·J⁻¹F
    if (!r.ok && previous) {
      // The previous point's solution was a poor start: retry from the network's own start.
      startNewton(at.net, run.cls, V);
      const again = solveNewton(plan, at.net, P, V, force);
      again.iterations += r.iterations;
      r = again;
    }
    previous = r.ok ? Float64Array.from(V) : previous;
    const t2 = performance.now();
    t.solveMs += t2 - t1;
    const ev = evaluate(at.net, V, P, kcl, store); //                I, ic, saturation, rail currents, KCL
    const outcome: Outcome = r.ok ? SOLVED : { ok: false, node: r.node, message: r.message };
    if (r.ok) {
      const w = accuracyWarning(at.net, ev); //                      KCL error ≤ KCL_LIMIT·I_max, or a warning
      if (w) ev.warnings.push(w);
    }
    run.record(
      at,
      V,
      ev,
      outcome,
      {
        method: "newton",
        iterations: r.iterations,
        residual: ev.residual,
        reason: run.reason,
        ordering: plan.ordering,
        continuation: r.ok ? r.continuation : false,
      },
      t2,
    );
  }
  return run.result;
}

/**
 * A Newton point whose KCL error exceeds KCL_LIMIT of its largest current:
 * its node voltages are right to their last digits (Newton's test), but a
 * channel whose source and drain are within rounding of each other (a node
 * picovolts from a rail) has a current resolved only to that error.
 */
function accuracyWarning(net: Network, ev: Evaluation): SolverWarning | null {
  const scale = currentScale(net, ev);
  if (!(ev.residual > KCL_LIMIT * scale) || ev.worstNode < 0) return null;
  const device = Math.max(0, firstDeviceAt(net, ev.worstNode));
  const { names } = net.devices;
  const node = net.nodes.names[ev.worstNode];
  return {
    kind: "accuracy",
    device,
    count: 1,
    worst: ev.residual / scale,
    message: `${names[device]}: the KCL error at node ${node} is ${ev.residual.toExponential(2)} A (${(ev.residual / scale).toExponential(1)} of the largest current); a channel there has its source and drain within rounding of each other (a node within picovolts of a rail), so the currents at ${node} are resolved only to about that`,
  };
}

/**
 * Newton's start: the weak-inversion linear solution when the network's
 * structure is in the linear class (EKV model), else rail averages.
 */
function startNewton(pnet: Network, cls: Classification, V: Float64Array): void {
  initialGuess(pnet, V);
  if (cls.reasons.length !== 1 || pnet.settings.model !== "ekv") return;
  // Only the model breaks linearity: the weak-inversion limit of EKV, I0 = ispec·exp(−κ·VT0/U_T) (docs/physics.md §4).
  const s = pnet.settings;
  const weak: Network = {
    ...pnet,
    settings: { ...s, model: "weak", i0: (s.ispec as number) * Math.exp((-s.kappa * (s.vt0 as number)) / s.ut) },
  };
  const weakCls = classify(weak);
  if (!weakCls.linear) return;
  try {
    const plan = planLinear(weak, weakCls);
    try {
      const P = deviceParams(weak, null);
      if (!factorLinear(plan, weak, P).ok) return;
      const W = new Float64Array(V.length);
      if (solveLinear(plan, weak, W).ok) V.set(W);
    } finally {
      releaseLinear(plan);
    }
  } catch {
    // Keep the rail-average start.
  }
}
