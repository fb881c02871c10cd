/**
 * Goal-seek: the value of a param in [low, high] at which a probe equals a
 * target, by Brent's method (R. P. Brent, Algorithms for Minimization
 * without Derivatives, 1973, ch. 4: bisection safeguarding secant and
 * inverse quadratic interpolation; docs/language.md, Goal-seek).
 *
 * Every evaluation is one operating point of the network with the param
 * set (applyPoint); the structure (ordering, symbolic analysis, device maps)
 * is analysed once and reused at every iteration (a PointSolver), and a
 * Newton-class search starts each solve from the last solution.
 *
 * Failures say what happened: the probe does not cross the target inside the
 * bracket (with its range over the points tried), a point that fails to
 * solve (with its value and the solver's message), the target reached only
 * at a bound.
 */

import { applyPoint } from "../lang/point";
import type { Network } from "../lang/network";
import { sweepGrid } from "./run";
import { PointSolver } from "./sensitivity";

export interface GoalSeekSpec {
  param: string;
  low: number;
  high: number;
  probe: string;
  target: number;
  /** Absolute tolerance on the param (default 1e-12·(|low| + |high|) + 1e-15). */
  xtol?: number;
  maxIterations?: number;
  /** Other params (or temp) held at these values: a point of another sweep. */
  overrides?: Readonly<Record<string, number>>;
}

export type GoalSeekResult =
  | {
      ok: true;
      param: string;
      value: number;
      probe: string;
      target: number;
      /** The probe at `value`. */
      achieved: number;
      /** Probe evaluations (solves), the two ends included. */
      iterations: number;
    }
  | {
      ok: false;
      kind: "no-sign-change" | "point-failed" | "bound" | "not-converged" | "bad-spec";
      param: string;
      probe: string;
      target: number;
      iterations: number;
      message: string;
      /** Lowest and highest probe value over the points tried (no-sign-change). */
      range?: { min: number; max: number };
      /** The param value where a point failed, or the bound the target sits on. */
      at?: number;
    };

/** Points of the bracket tried, ends included, when the ends do not straddle the target. */
const SCAN_POINTS = 9;

/** Finds `param` in [low, high] with probe = target (Brent 1973). */
export function goalSeek(net: Network, spec: GoalSeekSpec, solver?: PointSolver): GoalSeekResult {
  const { param, probe, target } = spec;
  const base = { param, probe, target };
  const own = solver === undefined;
  const ps = solver ?? new PointSolver();
  let iterations = 0;
  const fail = (
    kind: Extract<GoalSeekResult, { ok: false }>["kind"],
    message: string,
    extra: { range?: { min: number; max: number }; at?: number } = {},
  ): GoalSeekResult => ({ ok: false, kind, ...base, iterations, message, ...extra });
  try {
    if (!net.params.some((p) => p.name === param))
      return fail(
        "bad-spec",
        `no param named ${param} to search (params: ${net.params.map((p) => p.name).join(", ") || "none"})`,
      );
    if (!net.probes.some((p) => p.name === probe))
      return fail(
        "bad-spec",
        `no probe named ${probe} (probes: ${net.probes.map((p) => p.name).join(", ") || "none"})`,
      );
    if (!(Number.isFinite(spec.low) && Number.isFinite(spec.high) && spec.low < spec.high))
      return fail("bad-spec", `the bracket [${spec.low}, ${spec.high}] must be two finite numbers, the first lower`);
    if (!Number.isFinite(target)) return fail("bad-spec", `the target ${target} is not a finite number`);
    let failedAt: { x: number; message: string } | null = null;
    const f = (x: number): number => {
      iterations++;
      const r = ps.probes(applyPoint(net, { ...spec.overrides, [param]: x }));
      if (!r.ok) {
        failedAt = { x, message: r.message };
        return NaN;
      }
      const v = r.probes[probe];
      if (!Number.isFinite(v)) failedAt = { x, message: `probe ${probe} is not a number there` };
      return v - target;
    };
    const pointFailed = () => {
      const at = failedAt as unknown as { x: number; message: string };
      return fail("point-failed", `the point ${param} = ${at.x} failed: ${at.message}`, { at: at.x });
    };
    let a = spec.low;
    let b = spec.high;
    let fa = f(a);
    if (Number.isNaN(fa)) return pointFailed();
    let fb = f(b);
    if (Number.isNaN(fb)) return pointFailed();
    const xtol = spec.xtol ?? 1e-12 * (Math.abs(a) + Math.abs(b)) + 1e-15;
    if (fa === 0 || fb === 0) {
      const at = fa === 0 ? a : b;
      return fail("bound", `${probe} reaches ${target} only at the bound ${param} = ${at}: widen the bracket`, { at });
    }
    if (Math.sign(fa) === Math.sign(fb)) {
      // Look inside: a probe that is not monotonic may cross and come back.
      let min = Math.min(fa, fb);
      let max = Math.max(fa, fb);
      let found = false;
      let xPrev = a;
      let fPrev = fa;
      for (let i = 1; i < SCAN_POINTS - 1 && !found; i++) {
        const x = a + ((b - a) * i) / (SCAN_POINTS - 1);
        const fx = f(x);
        if (Number.isNaN(fx)) return pointFailed();
        min = Math.min(min, fx);
        max = Math.max(max, fx);
        if (Math.sign(fx) !== Math.sign(fPrev)) {
          a = xPrev;
          fa = fPrev;
          b = x;
          fb = fx;
          found = true;
        }
        xPrev = x;
        fPrev = fx;
      }
      if (!found)
        return fail(
          "no-sign-change",
          `${probe} does not cross ${target} for ${param} in [${spec.low}, ${spec.high}]: over the ${iterations} points tried it stays within [${min + target}, ${max + target}]`,
          { range: { min: min + target, max: max + target } },
        );
      if (fb === 0) return { ok: true, ...base, value: b, achieved: target, iterations };
    }
    // Brent's zeroin (Brent 1973, ch. 4), with b the best estimate and c the other end of the bracket.
    let c = a;
    let fc = fa;
    let d = b - a;
    let e = d;
    const maxIter = spec.maxIterations ?? 100;
    for (let it = 0; it < maxIter; it++) {
      if (Math.sign(fb) === Math.sign(fc)) {
        c = a;
        fc = fa;
        d = b - a;
        e = d;
      }
      if (Math.abs(fc) < Math.abs(fb)) {
        a = b;
        b = c;
        c = a;
        fa = fb;
        fb = fc;
        fc = fa;
      }
      const tol = 2 * Number.EPSILON * Math.abs(b) + 0.5 * xtol;
      const m = 0.5 * (c - b);
      if (Math.abs(m) <= tol || fb === 0) {
        const bound = Math.abs(b - spec.low) <= tol ? spec.low : Math.abs(b - spec.high) <= tol ? spec.high : null;
        if (bound !== null)
          return fail("bound", `${probe} reaches ${target} only at the bound ${param} = ${bound}: widen the bracket`, {
            at: bound,
          });
        return { ok: true, ...base, value: b, achieved: fb + target, iterations };
      }
      if (Math.abs(e) < tol || Math.abs(fa) <= Math.abs(fb)) {
        d = m;
        e = m;
      } else {
        let s = fb / fa;
        let p: number;
        let q: number;
        if (a === c) {
          p = 2 * m * s;
          q = 1 - s;
        } else {
          const qq = fa / fc;
          const r = fb / fc;
          p = s * (2 * m * qq * (qq - r) - (b - a) * (r - 1));
          q = (qq - 1) * (r - 1) * (s - 1);
        }
        if (p > 0) q = -q;
        else p = -p;
        s = e;
        e = d;
        if (2 * p < 3 * m * q - Math.abs(tol * q) && p < Math.abs(0.5 * s * q)) d = p / q;
        else {
          d = m;
          e = m;
        }
      }
      a = b;
      fa = fb;
      b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol;
      fb = f(b);
      if (Number.isNaN(fb)) return pointFailed();
    }
    return fail("not-converged", `no convergence in ${maxIter} iterations: ${param} is between ${b} and ${c}`);
  } finally {
    if (own) ps.release();
  }
}

export interface GoalSeekPoint {
  /** The other sweeps' values at this point (empty without sweeps). */
  overrides: Record<string, number>;
  result: GoalSeekResult;
}

/**
 * One search per point of the network's other sweeps (a sweep of the sought
 * param itself is ignored: the search sets it), the structure analysed once for all.
 */
export function goalSeekSweep(net: Network, spec: GoalSeekSpec): GoalSeekPoint[] {
  const ps = new PointSolver();
  try {
    const others = { ...net, sweeps: net.sweeps.filter((s) => s.param !== spec.param) };
    return sweepGrid(others).map((overrides) => ({
      overrides,
      result: goalSeek(net, { ...spec, overrides: { ...spec.overrides, ...overrides } }, ps),
    }));
  } finally {
    ps.release();
  }
}
