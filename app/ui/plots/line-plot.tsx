"use client";

/**
 * Curves over a shared x axis (uPlot). uPlot touches the DOM, so it is loaded
 * in an effect, never during server rendering.
 */
import { useEffect, useRef } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";
import { formatEng } from "@/app/lib/format";
import { alignMarks } from "./align-marks";
import { axisValues, logAxis, logScale } from "./axis";
import { curveColour, themeColour } from "@/app/ui/theme";
import type { Curve, Marks } from "./plot-types";

export interface LinePlotProps {
  title: string;
  x: number[];
  xLabel: string;
  xUnit?: string;
  curves: Curve[];
  yUnit?: string;
  logX?: boolean;
  logY?: boolean;
  /** Draw points only (scatter, e.g. samples). */
  points?: boolean;
  height?: number;
  /** Extra points-only series; the x axis becomes the sorted union of `x` and theirs, and the curves' lines span the added x. */
  marks?: Marks[];
}

/** Curves over a shared x axis. Non-positive values are dropped on a log axis. */
export function LinePlot({
  title,
  x,
  xLabel,
  xUnit,
  curves,
  yUnit,
  logX = false,
  logY = false,
  points = false,
  height = 300,
  marks = NO_MARKS,
}: LinePlotProps) {
  const host = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = host.current;
    if (!el || x.length === 0) return;
    let plot: uPlotType | null = null;
    let gone = false;
    const clean = (v: number | null | undefined, log: boolean) =>
      v === undefined ? undefined : v === null || !Number.isFinite(v) || (log && v <= 0) ? null : v;
    const aligned = alignMarks(x, curves, marks);
    const xs = logX ? aligned.x.map((v) => (v > 0 ? v : NaN)) : aligned.x;
    void import("uplot").then(({ default: uPlot }) => {
      if (gone) return;
      const opts: uPlotType.Options = {
        title,
        width: Math.max(320, el.clientWidth),
        height,
        scales: {
          x: logX ? { time: false, ...logScale() } : { time: false, distr: 1 },
          y: logY ? logScale() : { distr: 1 },
        },
        axes: [
          { label: xLabel, size: 40, ...(logX ? logAxis(xUnit) : { values: axisValues(xUnit) }) },
          { label: yUnit ? `(${yUnit})` : "", size: 70, ...(logY ? logAxis(yUnit) : { values: axisValues(yUnit) }) },
        ],
        series: [
          { label: xLabel, value: (_u, v) => (v == null ? "—" : formatEng(v, xUnit ?? "", 4)) },
          ...curves.map((c, i) => ({
            label: c.label,
            stroke: curveColour(i),
            width: points ? 0 : 1.75,
            points: {
              show: points || x.length < 40,
              size: points ? 4 : 5,
              fill: curveColour(i),
            },
            value: (_u: uPlotType, v: number | null) => (v == null ? "—" : formatEng(v, yUnit ?? "", 4)),
          })),
          ...marks.map((m) => ({
            label: m.label,
            stroke: themeColour(m.colour),
            width: 0,
            points: { show: true, size: 7, width: 1.5, stroke: themeColour(m.colour), fill: "#ffffff" },
            value: (_u: uPlotType, v: number | null) => (v == null ? "—" : formatEng(v, yUnit ?? "", 4)),
          })),
        ],
        legend: { live: true },
      };
      const data = [
        xs,
        ...aligned.curves.map((c) => c.map((v) => clean(v, logY))),
        ...aligned.marks.map((m) => m.map((v) => clean(v, logY))),
      ] as uPlotType.AlignedData;
      plot = new uPlot(opts, data, el);
    });
    const resize = () => plot?.setSize({ width: Math.max(320, el.clientWidth), height });
    window.addEventListener("resize", resize);
    return () => {
      gone = true;
      window.removeEventListener("resize", resize);
      plot?.destroy();
    };
  }, [title, x, xLabel, xUnit, curves, yUnit, logX, logY, points, height, marks]);
  return <div ref={host} role="img" aria-label={title} data-slot="plot" className="w-full overflow-hidden" />;
}

const NO_MARKS: Marks[] = [];
