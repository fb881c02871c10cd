/**
 * What the Expectations panel draws, from the run's series and summaries: each expectation's margin along the
 * sweep (the worst over the mismatch samples of a grid point), its yield per grid point with the 95 % Wilson
 * interval, and the swept values of a point. Pure: tested without a browser.
 */
import { wilsonInterval } from "@/src/solver/expectation-summary";
import type { Curve } from "@/app/ui/plots/plot-types";

export interface SweepAxis {
  param: string;
  values: number[];
  log: boolean;
}

/** The grid indices of grid point g (outer sweep slowest). */
export function gridIndices(sweeps: readonly SweepAxis[], g: number): number[] {
  const idx = new Array<number>(sweeps.length);
  let rest = g;
  for (let k = sweeps.length - 1; k >= 0; k--) {
    idx[k] = rest % sweeps[k].values.length;
    rest = Math.floor(rest / sweeps[k].values.length);
  }
  return idx;
}

/** The swept values of run point `point` (samples per grid point `samples`), by param. */
export function sweptAt(sweeps: readonly SweepAxis[], samples: number, point: number): Record<string, number> {
  const idx = gridIndices(sweeps, Math.floor(point / samples));
  return Object.fromEntries(sweeps.map((s, k) => [s.param, s.values[idx[k]]]));
}

/** Most curves one plot draws (one per combination of the other sweeps' values). */
export const MAX_CURVES = 12;

/**
 * Values per grid point as curves along sweep `xSweep`: one curve per combination of the other sweeps' values
 * (labelled by `label(param, value)`, a curve's label made by `keyOf` from those), at most MAX_CURVES.
 */
export function curvesAlong(
  sweeps: readonly SweepAxis[],
  xSweep: number,
  perGrid: readonly (number | null)[],
  name: string,
  label: (param: string, value: number) => string,
  keyOf: (others: string[]) => string = (others) => (others.length ? `${name} at ${others.join(", ")}` : name),
): Curve[] {
  const xs = sweeps[xSweep];
  const curves = new Map<string, Curve>();
  for (let g = 0; g < perGrid.length; g++) {
    const idx = gridIndices(sweeps, g);
    const others = sweeps.flatMap((s, k) => (k === xSweep ? [] : [label(s.param, s.values[idx[k]])]));
    const key = keyOf(others);
    let c = curves.get(key);
    if (!c) {
      if (curves.size >= MAX_CURVES) continue;
      c = { label: key, values: new Array<number | null>(xs.values.length).fill(null) };
      curves.set(key, c);
    }
    c.values[idx[xSweep]] = perGrid[g];
  }
  return [...curves.values()];
}

/** The worst (smallest) margin over each grid point's samples; null where no sample has one. */
export function worstPerGrid(margins: readonly (number | null)[], samples: number): (number | null)[] {
  const out: (number | null)[] = [];
  for (let g = 0; g * samples < margins.length; g++) {
    let worst: number | null = null;
    for (let s = 0; s < samples; s++) {
      const m = margins[g * samples + s];
      if (m !== null && m !== undefined && (worst === null || m < worst)) worst = m;
    }
    out.push(worst);
  }
  return out;
}

/** Yield per grid point and its 95 % Wilson interval (E. B. Wilson, JASA 22, 1927), as fractions. */
export function yieldPerGrid(gridYield: { passed: number[]; samples: number[] }): {
  yield: (number | null)[];
  low: (number | null)[];
  high: (number | null)[];
} {
  const y: (number | null)[] = [];
  const low: (number | null)[] = [];
  const high: (number | null)[] = [];
  gridYield.passed.forEach((k, g) => {
    const n = gridYield.samples[g];
    if (!(n > 0)) {
      y.push(null);
      low.push(null);
      high.push(null);
      return;
    }
    const w = wilsonInterval(k, n);
    y.push(k / n);
    low.push(w.low);
    high.push(w.high);
  });
  return { yield: y, low, high };
}
