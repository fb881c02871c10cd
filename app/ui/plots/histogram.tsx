"use client";

/** Counts of values in bins (uPlot bars). */
import { useEffect, useRef } from "react";
import type uPlotType from "uplot";
import "uplot/dist/uPlot.min.css";
import { formatEng } from "@/app/lib/format";
import { axisValues } from "./axis";
import { curveColour, withAlpha } from "@/app/ui/theme";
import { histogramBins } from "./histogram-bins";

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
              fill: withAlpha(curveColour(0), 0.6),
              stroke: curveColour(0),
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
