/**
 * The documents of `runnel sensitivity --json` and `runnel seek --json`
 * (docs/language.md, The runnel command): sensitivities and the mismatch
 * budget at the network's own point, and goal-seek results, as plain JSON.
 */

import type { Network } from "../lang/network";
import { type GoalSeekResult, goalSeekSweep } from "./goal-seek";
import { solveNetwork } from "./sweep";
import { adjointPoint, mismatchBudget, paramSensitivities, probeSensitivities } from "./sensitivity";

export interface DeviceSensitivityJson {
  device: string;
  /** ∂ln Q/∂ln(W/L): the probe's relative change per relative change of the device's W/L. */
  size: number | null;
  /** ∂Q/∂VT in the probe's unit per mV. */
  vt_per_mv: number;
}

export interface BudgetJson {
  avt: number;
  sigma: number;
  devices: { name: string; share: number; sigma: number }[];
  groups: { pattern: string; devices: number; share: number; sigma: number }[];
  /**
   * When the file's own `mismatch` has this avt: the Monte Carlo σ of the probe over its samples at the file's
   * own point (sample standard deviation) and that σ's standard error, σ/√(2(n−1)) (normal samples; common practice).
   */
  monte_carlo: { samples: number; sigma: number; standard_error: number } | null;
}

export interface ProbeSensitivityJson {
  probe: string;
  value: number | null;
  /** Devices by |∂Q/∂VT|, largest first (at most `top`). */
  devices: DeviceSensitivityJson[];
  /** ∂Q/∂param per param (central differences through the solve). */
  params: Record<string, number | null>;
  budget: BudgetJson | null;
}

export interface SensitivityJson {
  ok: boolean;
  network: string | null;
  method: "linear" | "newton" | null;
  error: string | null;
  probes: ProbeSensitivityJson[];
}

const num = (v: number): number | null => (Number.isFinite(v) ? v : null);

export function sensitivityJson(
  net: Network,
  opts: { avt?: number | null; groups?: readonly string[]; top?: number; probes?: readonly string[] } = {},
): SensitivityJson {
  const r = adjointPoint(net);
  if (!r.ok) return { ok: false, network: net.name, method: null, error: r.message, probes: [] };
  const top = opts.top ?? 20;
  const avt = opts.avt ?? net.mismatch?.avt ?? null;
  const names = net.devices.names;
  try {
    const sens = probeSensitivities(r.point, opts.probes);
    const mc = avt !== null && net.mismatch && net.mismatch.avt === avt ? monteCarlo(net) : null;
    const params = paramSensitivities(net);
    return {
      ok: true,
      network: net.name,
      method: r.point.method,
      error: null,
      probes: sens.map((s) => {
        const order = Array.from({ length: names.length }, (_, d) => d)
          .sort((a, b) => Math.abs(s.dVt[b]) - Math.abs(s.dVt[a]))
          .slice(0, top);
        const budget = avt === null ? null : { avt, ...mismatchBudget(net, s, avt, { top, groups: opts.groups }) };
        return {
          probe: s.probe,
          value: num(s.value),
          devices: order.map((d) => ({
            device: names[d],
            size: num(s.dLnSize[d] / s.value),
            vt_per_mv: s.dVt[d] * 1e-3,
          })),
          params: Object.fromEntries(params.map((p) => [p.param, num(p.probes[s.probe])])),
          budget: budget && {
            avt: budget.avt,
            sigma: budget.sigma,
            devices: budget.devices.map((d) => ({ name: d.name, share: d.share, sigma: Math.sqrt(d.variance) })),
            groups: budget.groups.map((g) => ({
              pattern: g.name,
              devices: g.devices,
              share: g.share,
              sigma: Math.sqrt(g.variance),
            })),
            monte_carlo: mc?.get(s.probe) ?? null,
          },
        };
      }),
    };
  } finally {
    r.point.release();
  }
}

export interface SeekJson {
  ok: boolean;
  network: string | null;
  param: string;
  probe: string;
  target: number;
  /** One search per point of the network's other sweeps. */
  points: ({ at: Record<string, number> } & (
    | { ok: true; value: number; achieved: number; iterations: number }
    | {
        ok: false;
        reason: string;
        message: string;
        iterations: number;
        range?: { min: number; max: number };
        value?: number;
      }
  ))[];
}

export function seekJson(
  net: Network,
  spec: { param: string; low: number; high: number; probe: string; target: number },
): SeekJson {
  const results = goalSeekSweep(net, spec);
  const points = results.map(({ overrides, result }) => pointJson(overrides, result));
  return {
    ok: points.every((p) => p.ok),
    network: net.name,
    param: spec.param,
    probe: spec.probe,
    target: spec.target,
    points,
  };
}

function pointJson(at: Record<string, number>, r: GoalSeekResult): SeekJson["points"][number] {
  if (r.ok) return { at, ok: true, value: r.value, achieved: r.achieved, iterations: r.iterations };
  return {
    at,
    ok: false,
    reason: r.kind,
    message: r.message,
    iterations: r.iterations,
    ...(r.range ? { range: r.range } : {}),
    ...(r.at !== undefined ? { value: r.at } : {}),
  };
}

/** Monte Carlo σ of every probe over the file's mismatch samples at its own point (other sweeps left out). */
function monteCarlo(net: Network): Map<string, { samples: number; sigma: number; standard_error: number }> {
  const values = new Map<string, number[]>(net.probes.map((p) => [p.name, []]));
  solveNetwork(
    { ...net, sweeps: [] },
    {
      keepPoints: false,
      reuseArrays: true,
      onPoint: (p) => {
        if (!p.ok) return;
        for (const [k, v] of Object.entries(p.probes)) if (Number.isFinite(v)) values.get(k)?.push(v);
      },
    },
  );
  const out = new Map<string, { samples: number; sigma: number; standard_error: number }>();
  for (const [k, v] of values) {
    const n = v.length;
    if (n < 2) continue;
    const mean = v.reduce((a, b) => a + b, 0) / n;
    const sigma = Math.sqrt(v.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1));
    out.set(k, { samples: n, sigma, standard_error: sigma / Math.sqrt(2 * (n - 1)) });
  }
  return out;
}
