/**
 * What the Probes view plots, as pure functions of a run's series: the sweep along the x axis, one curve per
 * combination of the other sweeps' values, the axes, and the view it opens on (the probe that varies most, currents
 * on a log axis). The interactive view (probes-panel.tsx) and the plot the server draws into the page before the
 * scripts run (first-look.ts) both use them, so the two show the same thing.
 */
import type { SeriesView } from "@/app/lib/results";
import type { AxisSpec, Curve } from "@/app/ui/plots/plot-types";
import { curvesAlong, MAX_CURVES } from "./expectation-curves";
import {
  defaultLog,
  meanOverSamples,
  mostVaryingProbe,
  paramUnit,
  probeAxis,
  probeUnit,
  sweepAxis,
} from "./sweep-values";

/** Formats a swept value with its unit (the reader's notation). */
export type ParamFormatter = (value: number, unit: string | null) => string;

export { MAX_CURVES };

/** The sweep plotted along x when the reader has not chosen: the one with the most values (the last on a tie). */
export function defaultXSweep(series: SeriesView): number {
  return series.sweeps.reduce((best, s, k) => (s.values.length >= series.sweeps[best].values.length ? k : best), 0);
}

export interface ProbeCurves {
  x: number[];
  xLabel: string;
  curves: Curve[];
}

/**
 * Probe `probe` along sweep `xSweep` (averaged over mismatch samples): one curve per combination of the other
 * sweeps' values (outer sweep slowest in the grid order), labelled with those values; null without sweeps or probes.
 */
export function probeCurves(
  series: SeriesView,
  probe: number,
  xSweep: number,
  fmt: ParamFormatter,
): ProbeCurves | null {
  if (series.sweeps.length === 0 || series.probes.length === 0) return null;
  const sweeps = series.sweeps;
  const xs = sweeps[xSweep];
  const values = meanOverSamples(series.probeValues[probe] ?? [], series.mismatch?.runs ?? 1);
  const name = series.probes[probe];
  const curves = curvesAlong(
    sweeps,
    xSweep,
    values,
    name,
    (param, v) => `${param} = ${fmt(v, paramUnit(series, param))}`,
    (others) => others.join(", ") || name,
  );
  return { x: xs.values, xLabel: xs.param, curves };
}

/** The x axis of the plot: the sweep's param, or the point index without sweeps. */
export function probeXAxis(series: SeriesView, xSweep: number, log: boolean): AxisSpec {
  return series.sweeps.length ? sweepAxis(series, xSweep, log) : { label: "point", unit: null, integer: true };
}

/** Whether probe `probe` opens on a log axis (currents, and positive series spanning more than two decades). */
export function probeDefaultLog(series: SeriesView, probe: number): boolean {
  return defaultLog(series.probeValues[probe] ?? [], probeUnit(series, probe));
}

export interface OpeningView extends ProbeCurves {
  title: string;
  probe: number;
  xAxis: AxisSpec;
  yAxis: AxisSpec;
}

/** The plot the Probes view opens on before the reader chooses anything (no bench data chosen); null without one. */
export function openingView(series: SeriesView, fmt: ParamFormatter): OpeningView | null {
  const probe = mostVaryingProbe(series.probeValues);
  const xSweep = defaultXSweep(series);
  const plot = probeCurves(series, probe, xSweep, fmt);
  if (!plot) return null;
  return {
    ...plot,
    probe,
    title: `${series.probes[probe]} over ${plot.xLabel}`,
    xAxis: probeXAxis(series, xSweep, series.sweeps[xSweep]?.log ?? false),
    yAxis: probeAxis(series, probe, probeDefaultLog(series, probe)),
  };
}
