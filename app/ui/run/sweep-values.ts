/** Helpers over a run's series: units of probes and swept params, means over mismatch samples, the default probe. */
import type { SeriesView } from "@/app/lib/results";
import type { AxisSpec } from "@/app/ui/plots/plot-types";
import { quantityLabel } from "@/app/ui/plots/axis";

/** Unit symbol of a param from the unit checker ("K" for temp; null when not known). */
export function paramUnit(series: Pick<SeriesView, "params" | "paramUnits">, name: string): string | null {
  const j = series.params.indexOf(name);
  return (j >= 0 ? series.paramUnits?.[j] : null) ?? (name === "temp" ? "K" : null);
}

/** Unit symbol of probe `j` from the unit checker ("V", "A", "W", "" for a ratio; null when not known). */
export function probeUnit(series: Pick<SeriesView, "probeUnits">, j: number): string | null {
  return series.probeUnits?.[j] ?? null;
}

/** The x axis of a sweep: its param and unit; a sweep of whole numbers without a unit counts (integer ticks). */
export function sweepAxis(series: SeriesView, k: number, log: boolean): AxisSpec {
  const sw = series.sweeps[k];
  const unit = paramUnit(series, sw.param);
  return { label: sw.param, unit, log, integer: !unit && sw.values.every(Number.isInteger) };
}

/** The y axis of probe `j`: "current out5" in A, "voltage x3" in V, … */
export function probeAxis(series: SeriesView, j: number, log: boolean): AxisSpec {
  const unit = probeUnit(series, j);
  return { label: quantityLabel(series.probes[j], unit), unit, log };
}

/** Mean over the samples of each grid point (the series has samples fastest). */
export function meanOverSamples(values: (number | null)[], samples: number): (number | null)[] {
  if (samples === 1) return values;
  const out: (number | null)[] = [];
  for (let g = 0; g * samples < values.length; g++) {
    let sum = 0;
    let n = 0;
    for (let s = 0; s < samples; s++) {
      const v = values[g * samples + s];
      if (v !== null && v !== undefined) {
        sum += v;
        n++;
      }
    }
    out.push(n ? sum / n : null);
  }
  return out;
}

/**
 * How much a probe varies over the run: decades spanned for a one-signed
 * series (|max| / |min|), else the range over the largest magnitude (0…2).
 * Constant, empty or non-finite series score 0.
 */
export function variation(values: (number | null)[]): number {
  let lo = Infinity;
  let hi = -Infinity;
  let alo = Infinity;
  let ahi = 0;
  for (const v of values) {
    if (v === null || !Number.isFinite(v)) continue;
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
    alo = Math.min(alo, Math.abs(v));
    ahi = Math.max(ahi, Math.abs(v));
  }
  if (!(hi > lo)) return 0;
  if ((lo > 0 || hi < 0) && alo > 0) return Math.log10(ahi / alo) + 1;
  return (hi - lo) / ahi;
}

/** The probe a sweep's plot opens on: the one that varies most (ties: the first). */
export function mostVaryingProbe(probeValues: (number | null)[][]): number {
  let best = 0;
  let score = -1;
  probeValues.forEach((v, j) => {
    const s = variation(v);
    if (s > score) {
      score = s;
      best = j;
    }
  });
  return best;
}

/** Whether a probe opens on a log axis: currents, and any positive series spanning more than two decades. */
export function defaultLog(values: (number | null)[], unit: string | null): boolean {
  if (unit === "A") return true;
  const finite = values.filter((v): v is number => v !== null && Number.isFinite(v));
  if (!finite.length || finite.some((v) => v <= 0)) return false;
  return Math.log10(Math.max(...finite) / Math.min(...finite)) > 2;
}
