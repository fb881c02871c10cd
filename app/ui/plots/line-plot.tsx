"use client";

/**
 * Curves over a shared x axis (uPlot), the plot every result view and panel
 * uses. Give it the axes as AxisSpec (label, unit, log, integer) and it writes
 * the titles ("current out5 (A)"), ticks in the reader's notation, decades on
 * log axes of any span, integer ticks on counting axes; the legend shows the
 * values under the pointer, or the last point's when not hovering; the plot
 * downloads as PNG, SVG and its data as CSV. On a log axis values ≤ 0 are left
 * out and counted under the plot (app/ui/plots/plot-data.ts has the rule).
 * uPlot touches the DOM, so it is loaded in an effect, never while rendering on the server.
 */
import { useEffect, useMemo, useRef } from "react";
import type uPlotType from "uplot";
import { mountUplot } from "@/app/ui/plots/load-uplot";
import "uplot/dist/uPlot.min.css";
import { formatValue } from "@/app/lib/format";
import { useNotation } from "@/app/ui/notation";
import { curveColour, themeColour, withAlpha } from "@/app/ui/theme";
import { alignMarks } from "./align-marks";
import { axisTitle, INTEGER_INCREMENTS, tickLabels } from "./axis";
import { isDecade, logRange, logSplits, MAX_LABELLED_DECADES } from "./log-ticks";
import { plotColumns, plotCsv, type Cell } from "./plot-data";
import { PlotDownloads } from "./plot-downloads";
import { plotSvg, type SvgSeries } from "./plot-svg";
import type { AxisSpec, Band, Curve, Marks } from "./plot-types";

export interface LinePlotProps {
  title: string;
  x: number[];
  xAxis: AxisSpec;
  yAxis: AxisSpec;
  curves: Curve[];
  /** Extra points-only series; the x axis becomes the sorted union of `x` and theirs, and the curves' lines span the added x. */
  marks?: Marks[];
  /** Shaded regions between pairs of curves (e.g. μ ± σ). */
  bands?: Band[];
  /** Draw points only (scatter, e.g. samples). */
  points?: boolean;
  height?: number;
}

const NO_MARKS: Marks[] = [];
const NO_BANDS: Band[] = [];

/** The last finite value of a column, for the legend when the pointer is elsewhere. */
function lastValue(col: ArrayLike<number | null | undefined>): number | null {
  for (let i = col.length - 1; i >= 0; i--) {
    const v = col[i];
    if (typeof v === "number" && Number.isFinite(v)) return v;
  }
  return null;
}

export function LinePlot({
  title,
  x,
  xAxis,
  yAxis,
  curves,
  marks = NO_MARKS,
  bands = NO_BANDS,
  points = false,
  height = 320,
}: LinePlotProps) {
  const host = useRef<HTMLDivElement>(null);
  const { notation } = useNotation();
  const data = useMemo(() => plotColumns(x, curves, marks, xAxis, yAxis), [x, curves, marks, xAxis, yAxis]);
  const labels = useMemo(
    () => [
      ...curves.map((c, i) => (data.magnitude.includes(i) ? `|${c.label}|` : c.label)),
      ...marks.map((m) => m.label),
    ],
    [curves, marks, data.magnitude],
  );

  useEffect(() => {
    const el = host.current;
    if (!el || x.length === 0) return;
    const fmtX = (v: number | null) => formatValue(v, xAxis.unit, { notation });
    const fmtY = (v: number | null) => formatValue(v, yAxis.unit, { notation });
    const width = () => Math.max(240, el.clientWidth);
    return mountUplot(
      el,
      (uPlot) => {
        const scale = (a: AxisSpec): uPlotType.Scale =>
          a.log ? { distr: 3, log: 10, range: (_u, min, max) => logRange(min, max) } : { distr: 1 };
        // The drawn tick labels are also kept on the host (data-x-ticks, data-y-ticks) for tests and tools.
        const axis = (a: AxisSpec, size: number, key: "xTicks" | "yTicks"): uPlotType.Axis => ({
          label: axisTitle(a),
          size,
          values: (u, splits) => {
            // As many decade labels as the axis has room for (a phone's plot is ~270 px wide).
            const px = (key === "xTicks" ? u.bbox.width : u.bbox.height) / (window.devicePixelRatio || 1);
            const room = Math.floor(px / (key === "xTicks" ? 56 : 22));
            const labels = tickLabels(a, splits, notation, Math.max(2, Math.min(MAX_LABELLED_DECADES, room)));
            el.dataset[key] = labels.filter(Boolean).join("|");
            return labels;
          },
          ...(a.log
            ? {
                splits: (_u: uPlotType, _i: number, min: number, max: number) => logSplits(min, max),
                // every split reaches `values`, which labels the decades it keeps (uPlot's own thinning drops more)
                filter: (_u: uPlotType, splits: number[]) => splits,
                grid: { filter: (_u: uPlotType, splits: number[]) => splits.map((v) => (isDecade(v) ? v : null)) },
              }
            : {}),
          ...(a.integer ? { incrs: INTEGER_INCREMENTS } : {}),
        });
        const legendValue =
          (fmt: (v: number | null) => string) => (u: uPlotType, v: number | null, s: number, i: number | null) =>
            i == null ? fmt(lastValue(u.data[s] as ArrayLike<number | null>)) : fmt(v);
        const opts: uPlotType.Options = {
          width: width(),
          height,
          scales: { x: { time: false, ...scale(xAxis) }, y: scale(yAxis) },
          axes: [axis(xAxis, 48, "xTicks"), axis(yAxis, 84, "yTicks")],
          series: [
            { label: axisTitle(xAxis), value: legendValue(fmtX) },
            ...curves.map((c, i) => {
              const colour = curveColour(c.colour ?? i);
              return {
                label: labels[i],
                stroke: colour,
                width: points ? 0 : 1.75,
                dash: c.dash ? [5, 3] : undefined,
                points: { show: points || x.length < 40, size: points ? 4 : 5, fill: colour },
                value: legendValue(fmtY),
              };
            }),
            ...marks.map((m, k) => ({
              label: labels[curves.length + k],
              stroke: themeColour(m.colour),
              width: 0,
              points: { show: true, size: 7, width: 1.5, stroke: themeColour(m.colour), fill: "#ffffff" },
              value: legendValue(fmtY),
            })),
          ],
          bands: bands.map((b) => ({
            series: [b.upper + 1, b.lower + 1] as [number, number],
            fill: withAlpha(curveColour(curves[b.upper]?.colour ?? b.upper), 0.15),
          })),
          legend: { live: true },
        };
        return new uPlot(opts, [data.x, ...data.columns] as uPlotType.AlignedData, el);
      },
      { width, height },
    );
  }, [x, xAxis, yAxis, curves, marks, bands, points, height, data, labels, notation]);

  const svgOf = () => {
    const series: SvgSeries[] = [
      ...curves.map((c, i) => ({
        label: labels[i],
        colour: curveColour(c.colour ?? i),
        style: points ? ("points" as const) : ("line" as const),
        dash: c.dash,
      })),
      ...marks.map((m, k) => ({
        label: labels[curves.length + k],
        colour: themeColour(m.colour),
        style: "points" as const,
      })),
    ];
    return plotSvg({
      title,
      x: data.x,
      columns: data.columns,
      series,
      bands,
      xAxis,
      yAxis,
      notation,
      ink: themeColour("stone-ink"),
      grid: themeColour("stone-300"),
    });
  };
  const csv = () => {
    const raw = alignMarks(x, curves, marks);
    const unitOf = (label: string) => (yAxis.unit ? `${label} (${yAxis.unit})` : label);
    const labels = [...curves.map((c) => unitOf(c.label)), ...marks.map((m) => unitOf(m.label))];
    return plotCsv(axisTitle(xAxis), labels, raw.x, [...raw.curves, ...raw.marks] as Cell[][]);
  };

  return (
    <figure className="space-y-1" data-slot="line-plot">
      <figcaption className="text-sm font-medium text-stone-800">{title}</figcaption>
      <div
        ref={host}
        role="img"
        aria-label={title}
        data-slot="plot"
        data-x-title={axisTitle(xAxis)}
        data-y-title={axisTitle(yAxis)}
        className="w-full overflow-hidden"
      />
      {data.dropped || data.magnitude.length ? (
        <p className="text-xs text-stone-500" data-slot="log-note">
          {data.magnitude.length
            ? `${data.magnitude.map((i) => curves[i].label).join(", ")}: negative throughout, drawn as magnitude. `
            : ""}
          {data.dropped
            ? `${data.dropped.toLocaleString("en-US")} value${data.dropped === 1 ? "" : "s"} ≤ 0 not drawn on the log axis (shown in the table).`
            : ""}
        </p>
      ) : null}
      <PlotDownloads title={title} picture={() => ({ svg: svgOf(), width: 900, height: 420 })} csv={csv} />
    </figure>
  );
}
