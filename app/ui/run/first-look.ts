/**
 * The plot the run page's server draws into the page, so that a done sweep shows its Probes plot before the
 * scripts have loaded: the view the Probes tab opens on (probe-plot.ts) as an SVG (plot-svg.ts, the same drawing
 * as the plot's SVG download). The interactive plot replaces it once the run's series has arrived. Pure.
 */
import { formatValue, type Notation } from "@/app/lib/format";
import type { SeriesView } from "@/app/lib/results";
import { plotColumns } from "@/app/ui/plots/plot-data";
import { plotSvg } from "@/app/ui/plots/plot-svg";
import { openingView } from "./probe-plot";

/** The drawing's colours: text, grid and the curve colours in order (the theme tokens of app/globals.css). */
export interface Palette {
  ink: string;
  grid: string;
  curves: string[];
}

/** Size of the drawing: as wide as the page's content at 1280 px, as tall as the interactive plot with its legend. */
export const FIRST_LOOK_SIZE = { width: 1200, height: 400 };

export interface FirstLook {
  title: string;
  svg: string;
}

export function firstLook(series: SeriesView, notation: Notation, palette: Palette): FirstLook | null {
  const view = openingView(series, (v, unit) => formatValue(v, unit, { notation }));
  if (!view) return null;
  const data = plotColumns(view.x, view.curves, [], view.xAxis, view.yAxis);
  const svg = plotSvg({
    title: view.title,
    x: data.x,
    columns: data.columns,
    series: view.curves.map((c, i) => ({
      label: data.magnitude.includes(i) ? `|${c.label}|` : c.label,
      colour: palette.curves[i % palette.curves.length],
      style: "line" as const,
    })),
    xAxis: view.xAxis,
    yAxis: view.yAxis,
    notation,
    ink: palette.ink,
    grid: palette.grid,
    ...FIRST_LOOK_SIZE,
  });
  return { title: view.title, svg };
}
