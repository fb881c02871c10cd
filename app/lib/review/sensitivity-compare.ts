/**
 * The compare page's sensitivity changes: two commits' Sensitivity views (app/lib/sensitivity-view.ts, each at its
 * file's own point) set side by side per probe: the probe's value, its first-order mismatch σ (the budget,
 * Pelgrom's σ per device through the adjoint threshold sensitivities) and the devices that weigh most on it,
 * with ∂Q/∂V_T before and after. Pure: the views are computed (and cached) elsewhere.
 */
import type { ProbeSensitivityJson, SensitivityJson } from "@/src/solver/design-json";

export interface SensitivitySide {
  value: number | null;
  /** First-order σ of the probe from the mismatch budget; null without one. */
  sigma: number | null;
  /** The device whose threshold mismatch weighs most (largest share of the budget). */
  topDevice: { name: string; share: number } | null;
}

export interface SensitivityChange {
  probe: string;
  /** null: the probe is not in that commit. */
  before: SensitivitySide | null;
  after: SensitivitySide | null;
  /** (σ after − σ before) / σ before; null when either is unknown or σ before is 0. */
  sigmaChange: number | null;
  /** The devices listed first on either side (by |∂Q/∂V_T|), with ∂Q/∂V_T per mV on each side (null: not listed). */
  devices: { device: string; before: number | null; after: number | null }[];
}

export interface SensitivityComparison {
  /** Why there is nothing to compare (a side that does not elaborate, is too large, or is not linear-solvable). */
  problems: string[];
  probes: SensitivityChange[];
}

function side(p: ProbeSensitivityJson | undefined): SensitivitySide | null {
  if (!p) return null;
  const top = p.budget?.devices[0];
  return {
    value: p.value,
    sigma: p.budget?.sigma ?? null,
    topDevice: top ? { name: top.name, share: top.share } : null,
  };
}

/** `top` devices per side, their union kept in the order of the newer side's ranking, then the older's. */
export function compareSensitivities(before: SensitivityJson, after: SensitivityJson, top = 5): SensitivityComparison {
  const problems: string[] = [];
  if (!before.ok) problems.push(`before: ${before.error ?? "no sensitivities"}`);
  if (!after.ok) problems.push(`after: ${after.error ?? "no sensitivities"}`);
  const a = new Map(before.probes.map((p) => [p.probe, p]));
  const b = new Map(after.probes.map((p) => [p.probe, p]));
  const names = [...after.probes.map((p) => p.probe), ...before.probes.map((p) => p.probe).filter((n) => !b.has(n))];
  const probes = names.map((probe): SensitivityChange => {
    const pa = a.get(probe);
    const pb = b.get(probe);
    const sa = side(pa);
    const sb = side(pb);
    const sigmaChange =
      sa?.sigma != null && sb?.sigma != null && sa.sigma !== 0 ? (sb.sigma - sa.sigma) / sa.sigma : null;
    const vtA = new Map((pa?.devices ?? []).map((d) => [d.device, d.vt_per_mv]));
    const vtB = new Map((pb?.devices ?? []).map((d) => [d.device, d.vt_per_mv]));
    const order = [...(pb?.devices ?? []).slice(0, top), ...(pa?.devices ?? []).slice(0, top)].map((d) => d.device);
    const devices = [...new Set(order)].map((device) => ({
      device,
      before: vtA.get(device) ?? null,
      after: vtB.get(device) ?? null,
    }));
    return { probe, before: sa, after: sb, sigmaChange, devices };
  });
  return { problems, probes };
}
