"use client";

/** A grid of values as coloured cells (canvas), with its scale and the value under the pointer. */
import { useEffect, useRef } from "react";
import { formatEng } from "@/app/lib/format";
import { themeColour } from "@/app/ui/theme";
import { mapColour } from "./map-colour";

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
    const unknown = themeColour("stone-200");
    const tr = (v: number) => (log ? Math.log10(v) : v);
    const span = tr(hi) - tr(lo) || 1;
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < cols; j++) {
        const v = values[i][j];
        g.fillStyle =
          v === null || !Number.isFinite(v) || (log && v <= 0) ? unknown : mapColour((tr(v) - tr(lo)) / span);
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
