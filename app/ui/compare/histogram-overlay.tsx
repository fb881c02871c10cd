"use client";

/** Two samples' counts on shared bins, drawn over each other (uPlot bars, translucent), before and after. */
import { useNotation } from "@/app/ui/notation";
import { useEffect, useRef } from "react";
import { mountUplot } from "@/app/ui/plots/load-uplot";
import "uplot/dist/uPlot.min.css";
import { formatTick } from "@/app/lib/format";
import { curveColour, withAlpha } from "@/app/ui/theme";
import { formatWithUnit } from "./value-format";

export interface HistogramOverlayProps {
  title: string;
  edges: number[];
  before: number[];
  after: number[];
  unit: string | null;
  labels: [string, string];
}

export function HistogramOverlay({ title, edges, before, after, unit, labels }: HistogramOverlayProps) {
  const { notation } = useNotation();
  const host = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = host.current;
    if (!el || before.length === 0) return;
    return mountUplot(el, (uPlot) => {
      const centres = before.map((_, i) => (edges[i] + edges[i + 1]) / 2);
      const bars = (i: number, offset: number) => ({
        label: labels[i],
        fill: withAlpha(curveColour(i), 0.45),
        stroke: curveColour(i),
        width: 1,
        paths: uPlot.paths.bars!({ size: [0.9, Infinity], align: offset as 0 }),
        points: { show: false },
      });
      return new uPlot(
        {
          title,
          width: Math.max(320, el.clientWidth),
          height: 220,
          scales: { x: { time: false }, y: { range: (_u, _min, max) => [0, Math.max(1, max) * 1.1] } },
          axes: [
            { values: (_u, splits) => splits.map((v) => (v == null ? "" : formatTick(v, unit, notation))), size: 40 },
            { label: "samples", size: 50 },
          ],
          series: [
            { label: title, value: (_u, v) => (v == null ? "—" : formatWithUnit(v, unit, 4, notation)) },
            bars(0, 0),
            bars(1, 0),
          ],
        },
        [centres, before, after],
        el,
      );
    });
  }, [title, edges, before, after, unit, labels, notation]);
  return <div ref={host} role="img" aria-label={title} data-slot="plot" className="w-full overflow-hidden" />;
}
