"use client";

/**
 * Counts of values in bins (uPlot bars), e.g. a probe over mismatch samples.
 * The x range is the bins' outer edges, so the first and last bars are whole
 * (never clipped); optional vertical markers (mean, quantiles) are drawn as
 * lines. Downloads as PNG, SVG and the bins as CSV.
 */
import { useEffect, useMemo, useRef } from "react";
import { mountUplot } from "@/app/ui/plots/load-uplot";
import "uplot/dist/uPlot.min.css";
import { formatValue } from "@/app/lib/format";
import { useNotation } from "@/app/ui/notation";
import { curveColour, themeColour, withAlpha } from "@/app/ui/theme";
import { axisTitle, tickLabels } from "./axis";
import { histogramBins } from "./histogram-bins";
import { plotCsv } from "./plot-data";
import { PlotDownloads } from "./plot-downloads";
import { plotSvg } from "./plot-svg";
import type { AxisSpec } from "./plot-types";

export interface HistogramProps {
  title: string;
  values: number[];
  /** The binned quantity's axis (label and unit). */
  axis: AxisSpec;
  /** Vertical markers at these x (e.g. μ, 5 % and 95 % quantiles). */
  markers?: { label: string; x: number }[];
  height?: number;
}

const COUNT_AXIS: AxisSpec = { label: "samples", unit: null, integer: true };
const NO_MARKERS: { label: string; x: number }[] = [];

export function Histogram({ title, values, axis, markers = NO_MARKERS, height = 260 }: HistogramProps) {
  const host = useRef<HTMLDivElement>(null);
  const { notation } = useNotation();
  const bins = useMemo(() => histogramBins(values), [values]);
  const centres = useMemo(() => bins.counts.map((_, i) => (bins.edges[i] + bins.edges[i + 1]) / 2), [bins]);
  useEffect(() => {
    const el = host.current;
    if (!el || bins.counts.length === 0) return;
    const width = () => Math.max(240, el.clientWidth);
    const lo = bins.edges[0];
    const hi = bins.edges[bins.edges.length - 1];
    const pad = hi > lo ? 0 : Math.abs(lo || 1) * 0.05;
    return mountUplot(
      el,
      (uPlot) =>
        new uPlot(
          {
            width: width(),
            height,
            scales: {
              x: { time: false, range: () => [lo - pad, hi + pad] },
              y: { range: (_u, _min, max) => [0, Math.max(1, max) * 1.1] },
            },
            axes: [
              { label: axisTitle(axis), values: (_u, s) => tickLabels(axis, s, notation), size: 48 },
              { label: "samples", values: (_u, s) => tickLabels(COUNT_AXIS, s, notation), size: 56 },
            ],
            series: [
              {
                label: axisTitle(axis),
                value: (_u, v) => formatValue(v, axis.unit, { notation }),
              },
              {
                label: "samples",
                fill: withAlpha(curveColour(0), 0.55),
                stroke: curveColour(0),
                width: 1,
                paths: uPlot.paths.bars!({ size: [1, Infinity], align: 0 }),
                points: { show: false },
              },
            ],
            hooks: {
              draw: [
                (u) => {
                  const g = u.ctx;
                  g.save();
                  g.strokeStyle = themeColour("ember-500");
                  g.setLineDash([4, 3]);
                  g.lineWidth = devicePixelRatio;
                  for (const m of markers) {
                    const px = u.valToPos(m.x, "x", true);
                    g.beginPath();
                    g.moveTo(px, u.bbox.top);
                    g.lineTo(px, u.bbox.top + u.bbox.height);
                    g.stroke();
                  }
                  g.restore();
                },
              ],
            },
          },
          [centres, bins.counts],
          el,
        ),
      { width, height },
    );
  }, [bins, centres, axis, markers, height, notation]);

  const svgOf = () =>
    plotSvg({
      title,
      x: centres,
      columns: [bins.counts],
      series: [{ label: "samples", colour: curveColour(0), style: "bars" }],
      xAxis: axis,
      yAxis: COUNT_AXIS,
      notation,
      ink: themeColour("stone-ink"),
      grid: themeColour("stone-300"),
    });
  return (
    <figure className="space-y-1" data-slot="histogram">
      <figcaption className="text-sm font-medium text-stone-800">{title}</figcaption>
      <div ref={host} role="img" aria-label={title} data-slot="plot" className="w-full overflow-hidden" />
      {markers.length ? (
        <p className="text-xs text-stone-500">
          dashed: {markers.map((m) => `${m.label} = ${formatValue(m.x, axis.unit, { notation })}`).join(" · ")}
        </p>
      ) : null}
      <PlotDownloads
        title={title}
        picture={() => ({ svg: svgOf(), width: 900, height: 420 })}
        csv={() =>
          plotCsv("bin from", ["bin to", "samples"], bins.edges.slice(0, -1), [bins.edges.slice(1), bins.counts])
        }
      />
    </figure>
  );
}
