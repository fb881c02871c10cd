"use client";

/**
 * Plots of run results: curves (uPlot), histograms (uPlot bars) and a heat map
 * (canvas). Axes show engineering notation with the unit. uPlot touches the
 * DOM, so it is loaded in an effect, never during server rendering.
 */
import { useEffect, useRef } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";
import { formatEng } from "@/app/lib/format";

/** Runnel's curve colours (moss, ember, slate, ochre, plum, teal). */
export const CURVE_COLOURS = ["#2f6748", "#b4532a", "#4b5d73", "#a07a1f", "#7a4b7a", "#2c7d80"];

export interface Curve {
  label: string;
  values: (number | null)[];
}

/** Points-only series at their own x (e.g. bench data), merged onto the plot's x axis. */
export interface Marks {
  label: string;
  x: number[];
  y: number[];
  colour: string;
}

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

/**
 * The aligned columns of curves and marks. Without marks, x and the curves are
 * passed unchanged. With marks, x is the sorted union; a value missing at an
 * added x is `undefined`, which uPlot joins over (only `null` breaks a line).
 */
export function alignMarks(
  x: number[],
  curves: Curve[],
  marks: Marks[],
): { x: number[]; curves: (number | null | undefined)[][]; marks: (number | undefined)[][] } {
  if (marks.length === 0) return { x, curves: curves.map((c) => c.values), marks: [] };
  const xs = [...new Set([...x, ...marks.flatMap((m) => m.x)])].filter(Number.isFinite).sort((a, b) => a - b);
  const at = new Map(xs.map((v, i) => [v, i]));
  const column = <T,>(px: number[], py: T[]) => {
    const out = new Array<T | undefined>(xs.length).fill(undefined);
    px.forEach((v, i) => {
      const j = at.get(v);
      if (j !== undefined) out[j] = py[i];
    });
    return out;
  };
  return { x: xs, curves: curves.map((c) => column(x, c.values)), marks: marks.map((m) => column(m.x, m.y)) };
}

function axisValues(unit: string | undefined) {
  return (_u: uPlotType, splits: number[]) => splits.map((v) => (v == null ? "" : formatEng(v, unit ?? "", 3)));
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
        scales: { x: { time: false, distr: logX ? 3 : 1 }, y: { distr: logY ? 3 : 1 } },
        axes: [
          { label: xLabel, values: axisValues(xUnit), size: 40 },
          { label: yUnit ? `(${yUnit})` : "", values: axisValues(yUnit), size: 70 },
        ],
        series: [
          { label: xLabel, value: (_u, v) => (v == null ? "—" : formatEng(v, xUnit ?? "", 4)) },
          ...curves.map((c, i) => ({
            label: c.label,
            stroke: CURVE_COLOURS[i % CURVE_COLOURS.length],
            width: points ? 0 : 1.75,
            points: {
              show: points || x.length < 40,
              size: points ? 4 : 5,
              fill: CURVE_COLOURS[i % CURVE_COLOURS.length],
            },
            value: (_u: uPlotType, v: number | null) => (v == null ? "—" : formatEng(v, yUnit ?? "", 4)),
          })),
          ...marks.map((m) => ({
            label: m.label,
            stroke: m.colour,
            width: 0,
            points: { show: true, size: 7, width: 1.5, stroke: m.colour, fill: "#ffffff" },
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

/** Bin edges and counts: Freedman–Diaconis width (Freedman & Diaconis 1981), between 5 and 60 bins. */
export function histogramBins(values: number[]): { edges: number[]; counts: number[] } {
  const v = values.filter(Number.isFinite).sort((a, b) => a - b);
  if (v.length === 0) return { edges: [], counts: [] };
  const q = (p: number) => v[Math.min(v.length - 1, Math.floor(p * (v.length - 1)))];
  const lo = v[0];
  const hi = v[v.length - 1];
  if (hi === lo) return { edges: [lo, lo], counts: [v.length] };
  const iqr = q(0.75) - q(0.25);
  const width = iqr > 0 ? (2 * iqr) / Math.cbrt(v.length) : (hi - lo) / 10;
  const n = Math.max(5, Math.min(60, Math.ceil((hi - lo) / width)));
  const step = (hi - lo) / n;
  const counts = new Array<number>(n).fill(0);
  for (const x of v) counts[Math.min(n - 1, Math.floor((x - lo) / step))]++;
  return { edges: Array.from({ length: n + 1 }, (_, i) => lo + i * step), counts };
}

export function Histogram({ title, values, unit }: { title: string; values: number[]; unit?: string }) {
  const host = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const { edges, counts } = histogramBins(values);
    if (counts.length === 0) return;
    let plot: uPlotType | null = null;
    let gone = false;
    void import("uplot").then(({ default: uPlot }) => {
      if (gone) return;
      const centres = counts.map((_, i) => (edges[i] + edges[i + 1]) / 2);
      plot = new uPlot(
        {
          title,
          width: Math.max(320, el.clientWidth),
          height: 260,
          scales: { x: { time: false }, y: { range: (_u, _min, max) => [0, Math.max(1, max) * 1.1] } },
          axes: [
            { values: axisValues(unit), size: 40 },
            { label: "samples", size: 50 },
          ],
          series: [
            { label: title, value: (_u, v) => (v == null ? "—" : formatEng(v, unit ?? "", 4)) },
            {
              label: "samples",
              fill: "#3f7d5a99",
              stroke: CURVE_COLOURS[0],
              width: 1,
              paths: uPlot.paths.bars!({ size: [0.95, Infinity], align: 0 }),
              points: { show: false },
            },
          ],
        },
        [centres, counts],
        el,
      );
    });
    return () => {
      gone = true;
      plot?.destroy();
    };
  }, [title, values, unit]);
  return <div ref={host} role="img" aria-label={title} data-slot="plot" className="w-full overflow-hidden" />;
}

/** Colour of t in [0, 1] on Runnel's map scale: deep slate → moss → pale straw. */
export function mapColour(t: number): string {
  const stops = [
    [31, 38, 64],
    [47, 103, 72],
    [160, 170, 80],
    [246, 238, 200],
  ];
  const x = Math.max(0, Math.min(1, t)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  const c = stops[i].map((a, k) => Math.round(a + f * (stops[i + 1][k] - a)));
  return `rgb(${c[0]},${c[1]},${c[2]})`;
}

export interface HeatMapProps {
  title: string;
  /** values[row][col]; null where nothing is known. */
  values: (number | null)[][];
  unit?: string;
  rowLabel: string;
  colLabel: string;
  log?: boolean;
}

/** A grid of values as coloured cells, with its scale and the value under the pointer. */
export function HeatMap({ title, values, unit, rowLabel, colLabel, log = false }: HeatMapProps) {
  const canvas = useRef<HTMLCanvasElement>(null);
  const readout = useRef<HTMLSpanElement>(null);
  const rows = values.length;
  const cols = rows ? Math.max(...values.map((r) => r.length)) : 0;
  const finite = values.flat().filter((v): v is number => v !== null && Number.isFinite(v) && (!log || v > 0));
  const lo = finite.length ? Math.min(...finite) : 0;
  const hi = finite.length ? Math.max(...finite) : 1;
  useEffect(() => {
    const c = canvas.current;
    if (!c || rows === 0 || cols === 0) return;
    const cell = Math.max(4, Math.floor(480 / Math.max(rows, cols)));
    c.width = cols * cell;
    c.height = rows * cell;
    const g = c.getContext("2d")!;
    const tr = (v: number) => (log ? Math.log10(v) : v);
    const span = tr(hi) - tr(lo) || 1;
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < cols; j++) {
        const v = values[i][j];
        g.fillStyle =
          v === null || !Number.isFinite(v) || (log && v <= 0) ? "#ddd" : mapColour((tr(v) - tr(lo)) / span);
        g.fillRect(j * cell, i * cell, cell, cell);
      }
    }
    const move = (e: MouseEvent) => {
      const r = c.getBoundingClientRect();
      const j = Math.floor(((e.clientX - r.left) / r.width) * cols);
      const i = Math.floor(((e.clientY - r.top) / r.height) * rows);
      const v = values[i]?.[j];
      if (readout.current)
        readout.current.textContent =
          v === undefined
            ? ""
            : `${rowLabel} ${i}, ${colLabel} ${j}: ${v === null ? "—" : formatEng(v, unit ?? "", 4)}`;
    };
    c.addEventListener("mousemove", move);
    return () => c.removeEventListener("mousemove", move);
  }, [values, rows, cols, lo, hi, log, unit, rowLabel, colLabel]);
  return (
    <figure className="space-y-2">
      <figcaption className="text-sm font-medium">{title}</figcaption>
      <div className="flex items-start gap-4">
        <canvas
          ref={canvas}
          role="img"
          aria-label={title}
          data-slot="heat-map"
          className="max-w-full border border-stone-300"
          style={{ imageRendering: "pixelated", width: "min(480px, 100%)" }}
        />
        <div className="flex flex-col items-center gap-1 text-xs text-stone-600">
          <span>{formatEng(hi, unit ?? "")}</span>
          <div
            className="h-40 w-4 rounded"
            style={{ background: `linear-gradient(to top, ${[0, 0.33, 0.66, 1].map(mapColour).join(",")})` }}
          />
          <span>{formatEng(lo, unit ?? "")}</span>
          {log ? <span>log scale</span> : null}
        </div>
      </div>
      <p className="tabular h-4 text-xs text-stone-600">
        <span ref={readout} />
      </p>
    </figure>
  );
}
