import type uPlotType from "uplot";
import { formatEng } from "@/app/lib/format";

/** uPlot tick labels in engineering notation with `unit`. */

export function axisValues(unit: string | undefined) {
  return (_u: uPlotType, splits: number[]) => splits.map((v) => (v == null ? "" : formatEng(v, unit ?? "", 3)));
}
