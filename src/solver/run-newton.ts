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

import { type Network, NFET } from "../lang/network";
import { type Classification, classify } from "./classify";
import { type DeviceParams, deviceCurrent, deviceParams, polarity } from "./device";
import { currentScale, evaluate, firstDeviceAt, KCL_LIMIT } from "./evaluate";
import { JUNCTION_TOLERANCE } from "../lang/vocabulary";
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
    let outcome: Outcome = r.ok ? SOLVED : { ok: false, node: r.node, message: r.message };
    if (r.ok) {
      const w = accuracyWarning(at.net, ev); //                      KCL error ≤ KCL_LIMIT·I_max, or a warning
      const junction = w ? forwardJunction(at.net, V, P, ev) : null; //   … or refused beside a forward-biased junction
      if (junction) outcome = junction;
      else if (w) ev.warnings.push(w);
      if (r.unstable) ev.warnings.push(instability(at.net)); //       stable: sign(det J) = (−1)^rows, or a warning
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
 * The warning for an unstable solution (newton.ts `unstable`): placed at the
 * first device whose gate is on an internal node (where feedback can make a
 * disturbance grow). By the index of a solution (the sign of det(−J)), whose
 * sum over all operating points of such a network is +1, one of index −1
 * means at least two others (common practice in the DC analysis of circuits
 * with feedback).
 */
function instability(net: Network): SolverWarning {
  const { gate, count, names } = net.devices;
  const rv = net.nodes.railValue;
  let device = 0;
  for (let d = 0; d < count; d++)
    if (!Number.isFinite(rv[gate[d]])) {
      device = d;
      break;
    }
  return {
    kind: "unstable",
    device,
    count: 1,
    worst: 0,
    message: `${names[device]}: this operating point is unstable (the Jacobian has an odd number of eigenvalues with a positive real part: a small disturbance grows, as in a latch at its balance point); the network has other operating points, which Newton reaches from other starts`,
  };
}

/**
 * A point whose KCL error is beyond KCL_LIMIT at a node where a device's
 * junction is forward-biased (a source or drain beyond its bulk or well): not
 * an operating point to report. There the channel's forward and reverse
 * currents, each growing as e^{bias/U_T}, cancel to the net current beyond
 * what the node voltages resolve (a pfet whose well is 0.8 V below its source:
 * amperes cancelling to nanoamperes, currents off by percents), and a real
 * device conducts a junction current the model does not have. Null when no
 * device at the worst node has a forward-biased junction (the accuracy
 * warning stands then).
 */
function forwardJunction(net: Network, V: Float64Array, P: DeviceParams, ev: Evaluation): Outcome | null {
  const node = ev.worstNode;
  const { type, gate, source, drain, bulk, count } = net.devices;
  const four = new Float64Array(4);
  let worst = -1;
  let bias = JUNCTION_TOLERANCE;
  for (let d = 0; d < count; d++) {
    if (source[d] !== node && drain[d] !== node) continue;
    const sg = polarity(type[d]);
    const vb = bulk[d] >= 0 ? V[bulk[d]] : 0;
    const fwd = -Math.min(sg * (V[source[d]] - vb), sg * (V[drain[d]] - vb));
    if (fwd > bias) {
      bias = fwd;
      worst = d;
    }
  }
  if (worst < 0) return null;
  const d = worst;
  const sg = polarity(type[d]);
  const vb = bulk[d] >= 0 ? V[bulk[d]] : 0;
  const xs = sg * (V[source[d]] - vb);
  const xd = sg * (V[drain[d]] - vb);
  const iF = deviceCurrent(P, d, sg * (V[gate[d]] - vb), xs, xd, four);
  const where = type[d] === NFET ? "bulk" : "well";
  const end = xs <= xd ? "source" : "drain";
  const scale = currentScale(net, ev);
  return {
    ok: false,
    node,
    message: `no reliable operating point: ${net.devices.names[d]}'s ${end} is beyond its ${where} by ${bias.toFixed(3)} V (a forward-biased junction, whose current the model does not have), and its channel's forward and reverse currents of ${iF.toExponential(2)} A cancel to ${Math.abs(four[0]).toExponential(2)} A, beyond what double precision resolves: the KCL error at node ${net.nodes.names[node]} is ${ev.residual.toExponential(2)} A (${(ev.residual / scale).toExponential(1)} of the largest current)`,
  };
}

/**
 * Newton's start: the weak-inversion linear solution when the network's
 * structure is in the linear class (EKV model), else rail averages.
 */
function startNewton(pnet: Network, cls: Classification, V: Float64Array): void {
  initialGuess(pnet, V);
  if (cls.reasons.length !== 1 || pnet.settings.model !== "ekv") return;
  // Only the model breaks linearity: the weak-inversion limit of EKV, I0 = ispec·exp(−κ·VT0/U_T)
  // (docs/physics.md §4 EKV all-region model).
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
