import type uPlotType from "uplot";
import { formatEng } from "@/app/lib/format";
import { decadeStep, labelledDecade, logRange, logSplits } from "./log-ticks";

/** uPlot tick labels in engineering notation with `unit`. */

export function axisValues(unit: string | undefined) {
  return (_u: uPlotType, splits: number[]) => splits.map((v) => (v == null ? "" : formatEng(v, unit ?? "", 3)));
}

/**
 * The scale and axis options of a log axis of any span (app/ui/plots/log-ticks.ts): whole decades as its range,
 * ticks computed exactly (uPlot's own log splits never end below about 1e-16), labels on decades only, every k-th
 * decade on a long axis so the labels do not overlap.
 */
export function logScale(): uPlotType.Scale {
  return { distr: 3, log: 10, range: (_u, min, max) => logRange(min, max) };
}

export function logAxis(unit: string | undefined): Pick<uPlotType.Axis, "splits" | "values"> {
  return {
    splits: (_u: uPlotType, _i: number, min: number, max: number) => logSplits(min, max),
    values: (_u: uPlotType, splits: number[]) => {
      const decades = splits.length ? Math.log10(splits[splits.length - 1] / splits[0]) : 0;
      const step = decadeStep(decades);
      return splits.map((v) => (v != null && labelledDecade(v, step) ? formatEng(v, unit ?? "", 3) : ""));
    },
  };
}
