"use client";

/**
 * A grid of values as coloured cells, with labelled axes (node indices or
 * sweep values), square cells (the aspect ratio follows the grid), a colour
 * legend in the value's unit and the value under the pointer. Cells are drawn
 * on a canvas (a 200 × 200 grid is 40,000 cells); axes and legend are HTML.
 * Downloads as PNG, SVG and the matrix as CSV.
 */
import { useEffect, useMemo, useRef, useState } from "react";
import { formatValue } from "@/app/lib/format";
import { useNotation } from "@/app/ui/notation";
import { themeColour } from "@/app/ui/theme";
import { axisTitle } from "./axis";
import { heatMapSvg } from "./heat-map-svg";
import { labelEvery, mapColour, mapPosition, mapRange, mapStops } from "./map-colour";
import { PlotDownloads } from "./plot-downloads";
import type { AxisSpec, MapAxis } from "./plot-types";

export type { MapAxis };

export interface HeatMapProps {
  title: string;
  /** values[row][col]; null where nothing is known. */
  values: (number | null)[][];
  rows: MapAxis;
  cols: MapAxis;
  /** The mapped quantity (legend title, readout): label and unit. */
  value: AxisSpec;
}

const LEFT = 64;
const LEGEND = 96;
const MAX_HEIGHT = 520;

export function HeatMap({ title, values, rows, cols, value }: HeatMapProps) {
  const canvas = useRef<HTMLCanvasElement>(null);
  const box = useRef<HTMLDivElement>(null);
  const [avail, setAvail] = useState(640);
  const [hover, setHover] = useState<{ i: number; j: number } | null>(null);
  const { notation } = useNotation();
  const nr = values.length;
  const nc = nr ? Math.max(...values.map((r) => r.length)) : 0;
  const log = !!value.log;
  const { lo, hi, skipped } = useMemo(() => mapRange(values, log), [values, log]);
  // Square cells as large as the width allows, the whole map at most MAX_HEIGHT tall.
  const cell =
    nr && nc ? Math.max(2, Math.min(48, Math.floor((avail - LEFT - LEGEND) / nc), Math.floor(MAX_HEIGHT / nr))) : 0;
  const w = cell * nc;
  const h = cell * nr;

  useEffect(() => {
    const el = box.current;
    if (!el) return;
    const observer = new ResizeObserver(() => setAvail(el.clientWidth));
    observer.observe(el);
    return () => observer.disconnect();
  }, []);

  useEffect(() => {
    const c = canvas.current;
    if (!c || !cell) return;
    const dpr = window.devicePixelRatio || 1;
    c.width = w * dpr;
    c.height = h * dpr;
    const g = c.getContext("2d")!;
    g.scale(dpr, dpr);
    const unknown = themeColour("stone-200");
    for (let i = 0; i < nr; i++)
      for (let j = 0; j < nc; j++) {
        const v = values[i][j];
        const t = v === null || v === undefined ? NaN : mapPosition(v, lo, hi, log);
        g.fillStyle = Number.isNaN(t) ? unknown : mapColour(t);
        g.fillRect(j * cell, i * cell, cell, cell);
      }
  }, [values, nr, nc, cell, w, h, lo, hi, log]);

  const readout = (() => {
    if (!hover) return "";
    const v = values[hover.i]?.[hover.j];
    if (v === undefined) return "";
    return `${rows.label} ${rows.ticks[hover.i] ?? hover.i}, ${cols.label} ${cols.ticks[hover.j] ?? hover.j}: ${formatValue(v, value.unit, { notation })}`;
  })();
  const rowEvery = labelEvery(nr, Math.max(2, Math.floor(h / 16)));
  const colEvery = labelEvery(nc, Math.max(2, Math.floor(w / 56)));
  const legendTicks = log ? [hi, Math.sqrt(lo * hi), lo] : [hi, (lo + hi) / 2, lo];

  const svgOf = () =>
    heatMapSvg({
      title,
      values,
      rows,
      cols,
      value,
      lo,
      hi,
      notation,
      ink: themeColour("stone-ink"),
      unknown: themeColour("stone-200"),
    });
  const csv = () => {
    const quote = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
    const head = [`${rows.label} \\ ${cols.label}`, ...cols.ticks].map(quote).join(",");
    const lines = values.map((r, i) =>
      [quote(rows.ticks[i] ?? String(i)), ...r.map((v) => (v === null || !Number.isFinite(v) ? "" : String(v)))].join(
        ",",
      ),
    );
    return [`# ${axisTitle(value)}`, head, ...lines].join("\n") + "\n";
  };

  return (
    <figure className="space-y-2" data-slot="heat-map-figure">
      <figcaption className="text-sm font-medium text-stone-800">{title}</figcaption>
      <div ref={box} className="w-full">
        <div className="flex items-start gap-3">
          <div>
            <div className="flex">
              {/* Row axis: title turned, then the row ticks beside the cells. */}
              <div className="relative shrink-0" style={{ width: LEFT, height: h }} data-slot="map-row-axis">
                <span
                  className="absolute top-0 left-0 flex h-full w-4 items-center justify-center text-xs whitespace-nowrap text-stone-600"
                  style={{ writingMode: "vertical-rl", transform: "rotate(180deg)" }}
                >
                  {axisTitle({ label: rows.label, unit: rows.unit ?? null })}
                </span>
                {rows.ticks.map((t, i) =>
                  i % rowEvery === 0 || i === nr - 1 ? (
                    <span
                      key={i}
                      className="tabular absolute right-1 text-[11px] leading-none text-stone-600"
                      style={{ top: i * cell + cell / 2 - 5 }}
                    >
                      {t}
                    </span>
                  ) : null,
                )}
              </div>
              <canvas
                ref={canvas}
                role="img"
                aria-label={title}
                data-slot="heat-map"
                className="block border border-stone-300"
                style={{ width: w, height: h }}
                onMouseMove={(e) => {
                  const r = e.currentTarget.getBoundingClientRect();
                  const j = Math.floor(((e.clientX - r.left) / r.width) * nc);
                  const i = Math.floor(((e.clientY - r.top) / r.height) * nr);
                  setHover(i >= 0 && j >= 0 && i < nr && j < nc ? { i, j } : null);
                }}
                onMouseLeave={() => setHover(null)}
              />
            </div>
            {/* Column axis: ticks under the cells, then its title. */}
            <div className="relative" style={{ marginLeft: LEFT, width: w, height: 18 }} data-slot="map-col-axis">
              {cols.ticks.map((t, j) =>
                j % colEvery === 0 || j === nc - 1 ? (
                  <span
                    key={j}
                    className="tabular absolute top-1 -translate-x-1/2 text-[11px] leading-none whitespace-nowrap text-stone-600"
                    style={{ left: j * cell + cell / 2 }}
                  >
                    {t}
                  </span>
                ) : null,
              )}
            </div>
            <p className="text-center text-xs text-stone-600" style={{ marginLeft: LEFT, width: w }}>
              {axisTitle({ label: cols.label, unit: cols.unit ?? null })}
            </p>
          </div>
          <div
            className="flex shrink-0 flex-col gap-1 text-[11px] text-stone-600"
            aria-label="Colour legend"
            data-slot="map-legend"
          >
            <span className="text-xs font-medium">{axisTitle(value)}</span>
            <div className="flex gap-1.5">
              <div
                className="w-3.5 rounded-sm border border-stone-300"
                style={{
                  height: Math.max(120, Math.min(h, 240)),
                  background: `linear-gradient(to top, ${mapStops().join(",")})`,
                }}
              />
              <div
                className="tabular flex flex-col justify-between"
                style={{ height: Math.max(120, Math.min(h, 240)) }}
              >
                {legendTicks.map((v, k) => (
                  <span key={k}>{formatValue(v, value.unit, { notation })}</span>
                ))}
              </div>
            </div>
            {log ? <span>log scale</span> : null}
            <span className="inline-flex items-center gap-1">
              <span className="inline-block h-3 w-3 border border-stone-300 bg-stone-200" /> no value
              {skipped ? ` (${skipped} ≤ 0)` : ""}
            </span>
          </div>
        </div>
      </div>
      <p className="tabular h-4 text-xs text-stone-700" data-slot="map-readout">
        {readout}
      </p>
      <PlotDownloads title={title} picture={svgOf} csv={csv} />
    </figure>
  );
}
