/**
 * What the run page's server draws into the page, so that a done run shows its first plot before the scripts have
 * loaded: for a sweep, the plot the Probes view opens on (probe-plot.ts); for one point of a network with a grid of
 * names, the map the Map view opens on (map-specs.ts). Drawn as SVG by the same code as the plots' SVG downloads
 * (plot-svg.ts, heat-map-svg.ts); the interactive view replaces it once the run's results have arrived. Pure.
 */
import { formatValue, type Notation } from "@/app/lib/format";
import type { SeriesView } from "@/app/lib/results";
import { heatMapSvg } from "@/app/ui/plots/heat-map-svg";
import { mapRange } from "@/app/ui/plots/map-colour";
import { plotColumns } from "@/app/ui/plots/plot-data";
import { plotSvg } from "@/app/ui/plots/plot-svg";
import { mapSpecs, openingMap, type MapPoint } from "./map-specs";
import { openingView } from "./probe-plot";

/** The drawing's colours: text, grid and the curve colours in order (the theme tokens of app/globals.css). */
export interface Palette {
  ink: string;
  grid: string;
  /** A map's cells where nothing is known. */
  unknown: string;
  curves: string[];
}

/** Size of the drawing: as wide as the page's content at 1280 px, as tall as the interactive plot with its legend. */
export const FIRST_LOOK_SIZE = { width: 1200, height: 400 };

export interface FirstLook {
  /** The view it stands for: the Probes plot, or the Map. */
  view: "probes" | "map";
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
  return { view: "probes", title: view.title, svg };
}

/** The Map view's opening map of one point (a current if there is one, on a log scale); null without a grid. */
export function firstLookMap(
  point: MapPoint,
  series: SeriesView,
  notation: Notation,
  palette: Palette,
): FirstLook | null {
  const m = openingMap(mapSpecs(point, series, (v, unit) => formatValue(v, unit, { notation })));
  if (!m) return null;
  const log = m.unit === "A";
  const { lo, hi } = mapRange(m.values, log);
  const { svg } = heatMapSvg({
    title: m.label,
    values: m.values,
    rows: m.rows,
    cols: m.cols,
    value: { label: m.label.replace(/ over .*$/, ""), unit: m.unit, log },
    lo,
    hi,
    notation,
    ink: palette.ink,
    unknown: palette.unknown,
  });
  return { view: "map", title: m.label, svg };
}
