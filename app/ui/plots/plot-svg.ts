/**
 * A line plot as a standalone SVG document (the "SVG" download, and the
 * source of the "PNG" one): the same columns, axes, ticks and colours as the
 * interactive plot, drawn as vectors. Pure; the caller supplies the colours.
 */
import type { Notation } from "@/app/lib/format";
import { axisTitle, tickLabels } from "./axis";
import { logRange, logSplits } from "./log-ticks";
import type { Cell } from "./plot-data";
import type { AxisSpec, Band } from "./plot-types";

export interface SvgSeries {
  label: string;
  colour: string;
  /** "line", "points" (marks, scatter) or "bars" (a histogram: bars from 0, as wide as the x spacing). */
  style: "line" | "points" | "bars";
  dash?: boolean;
}

export interface SvgPlot {
  title: string;
  x: number[];
  columns: Cell[][];
  series: SvgSeries[];
  bands?: Band[];
  xAxis: AxisSpec;
  yAxis: AxisSpec;
  notation: Notation;
  width?: number;
  height?: number;
  /** Text colour and grid colour. */
  ink: string;
  grid: string;
}

/** About `count` round ticks (1, 2, 5 × 10^k apart) over [lo, hi]. */
export function linearTicks(lo: number, hi: number, count = 6, integer = false): number[] {
  if (!(hi > lo)) return [lo];
  let step = (hi - lo) / count;
  const mag = Math.pow(10, Math.floor(Math.log10(step)));
  step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= step) ?? 10 * mag;
  if (integer) step = Math.max(1, Math.round(step));
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Number(v.toPrecision(12)));
  return out;
}

function extent(values: Cell[]): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    if (typeof v === "number" && Number.isFinite(v)) {
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return [lo, hi];
}

function axisRange(values: Cell[], a: AxisSpec): [number, number] {
  const [lo, hi] = extent(values);
  if (!Number.isFinite(lo)) return a.log ? [1, 10] : [0, 1];
  if (a.log) return logRange(lo, hi);
  if (hi === lo) return [lo - Math.abs(lo || 1) * 0.1, hi + Math.abs(hi || 1) * 0.1];
  const pad = (hi - lo) * 0.05;
  return [lo - pad, hi + pad];
}

const esc = (s: string) => s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");

export function plotSvg(p: SvgPlot): string {
  const W = p.width ?? 900;
  const H = p.height ?? 420;
  const left = 84;
  const right = 32;
  const legendRows = Math.ceil(p.series.length / 3);
  const top = 34 + legendRows * 16;
  const bottom = 52;
  const pw = W - left - right;
  const ph = H - top - bottom;
  const bars = p.series.some((s) => s.style === "bars");
  const half = bars && p.x.length > 1 ? Math.abs(p.x[1] - p.x[0]) / 2 : bars ? 0.5 : 0;
  const [x0, x1] = bars ? [Math.min(...p.x) - half, Math.max(...p.x) + half] : axisRange(p.x, p.xAxis);
  const [y0, y1] = bars
    ? [0, Math.max(1, ...(p.columns.flat().filter((v) => typeof v === "number") as number[])) * 1.1]
    : axisRange(p.columns.flat(), p.yAxis);
  const tx = p.xAxis.log ? Math.log10 : (v: number) => v;
  const ty = p.yAxis.log ? Math.log10 : (v: number) => v;
  // coordinates to a tenth of a pixel (the drawing's text stays short)
  const tenth = (v: number) => Math.round(v * 10) / 10;
  const sx = (v: number) => tenth(left + ((tx(v) - tx(x0)) / (tx(x1) - tx(x0) || 1)) * pw);
  const sy = (v: number) => tenth(top + ph - ((ty(v) - ty(y0)) / (ty(y1) - ty(y0) || 1)) * ph);
  const xt = p.xAxis.log ? logSplits(x0, x1) : linearTicks(x0, x1, 7, p.xAxis.integer);
  const yt = p.yAxis.log ? logSplits(y0, y1) : linearTicks(y0, y1, 6, p.yAxis.integer);
  const xl = tickLabels(p.xAxis, xt, p.notation);
  const yl = tickLabels(p.yAxis, yt, p.notation);
  const out: string[] = [];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="Inter, system-ui, sans-serif" font-size="12">`,
    `<rect width="${W}" height="${H}" fill="#ffffff"/>`,
    `<text x="${left}" y="18" font-size="14" font-weight="600" fill="${p.ink}">${esc(p.title)}</text>`,
  );
  p.series.forEach((s, i) => {
    const lx = left + (i % 3) * Math.floor(pw / 3);
    const ly = 34 + Math.floor(i / 3) * 16;
    out.push(
      s.style === "points"
        ? `<circle cx="${lx + 8}" cy="${ly - 4}" r="3.5" fill="#ffffff" stroke="${s.colour}" stroke-width="1.5"/>`
        : `<line x1="${lx}" y1="${ly - 4}" x2="${lx + 16}" y2="${ly - 4}" stroke="${s.colour}" stroke-width="2"${s.dash ? ' stroke-dasharray="5 3"' : ""}/>`,
      `<text x="${lx + 22}" y="${ly}" fill="${p.ink}">${esc(s.label)}</text>`,
    );
  });
  out.push(`<g stroke="${p.grid}" stroke-width="1">`);
  xt.forEach((v, i) => xl[i] && out.push(`<line x1="${sx(v)}" y1="${top}" x2="${sx(v)}" y2="${top + ph}"/>`));
  yt.forEach((v, i) => yl[i] && out.push(`<line x1="${left}" y1="${sy(v)}" x2="${left + pw}" y2="${sy(v)}"/>`));
  out.push(`</g>`, `<rect x="${left}" y="${top}" width="${pw}" height="${ph}" fill="none" stroke="${p.ink}"/>`);
  out.push(`<g fill="${p.ink}">`);
  xt.forEach((v, i) => {
    out.push(
      `<line x1="${sx(v)}" y1="${top + ph}" x2="${sx(v)}" y2="${top + ph + (xl[i] ? 5 : 3)}" stroke="${p.ink}"/>`,
    );
    if (xl[i]) out.push(`<text x="${sx(v)}" y="${top + ph + 18}" text-anchor="middle">${esc(xl[i])}</text>`);
  });
  yt.forEach((v, i) => {
    out.push(`<line x1="${left - (yl[i] ? 5 : 3)}" y1="${sy(v)}" x2="${left}" y2="${sy(v)}" stroke="${p.ink}"/>`);
    if (yl[i]) out.push(`<text x="${left - 8}" y="${tenth(sy(v) + 4)}" text-anchor="end">${esc(yl[i])}</text>`);
  });
  out.push(
    `<text x="${left + pw / 2}" y="${H - 12}" text-anchor="middle">${esc(axisTitle(p.xAxis))}</text>`,
    `<text transform="translate(16 ${top + ph / 2}) rotate(-90)" text-anchor="middle">${esc(axisTitle(p.yAxis))}</text>`,
    `</g>`,
  );
  const pointsAt = (col: Cell[]) =>
    p.x
      .map((xv, i) => [xv, col[i]] as const)
      .filter(
        (c): c is readonly [number, number] =>
          Number.isFinite(c[0]) && typeof c[1] === "number" && Number.isFinite(c[1]),
      );
  for (const b of p.bands ?? []) {
    const up = pointsAt(p.columns[b.upper]);
    const lo = pointsAt(p.columns[b.lower]).reverse();
    if (up.length && lo.length) {
      const d = [...up, ...lo]
        .map(([xv, yv], i) => `${i ? "L" : "M"}${sx(xv).toFixed(1)} ${sy(yv).toFixed(1)}`)
        .join(" ");
      out.push(`<path d="${d} Z" fill="${p.series[b.upper].colour}" fill-opacity="0.15" stroke="none"/>`);
    }
  }
  p.series.forEach((s, j) => {
    const col = p.columns[j];
    if (s.style === "bars") {
      const half = p.x.length > 1 ? Math.abs(p.x[1] - p.x[0]) / 2 : 0.5;
      for (const [xv, yv] of pointsAt(col)) {
        const a = sx(xv - half);
        const b = sx(xv + half);
        out.push(
          `<rect x="${Math.min(a, b).toFixed(1)}" y="${sy(yv).toFixed(1)}" width="${Math.abs(b - a).toFixed(1)}" height="${(sy(0) - sy(yv)).toFixed(1)}" fill="${s.colour}" fill-opacity="0.6" stroke="${s.colour}"/>`,
        );
      }
      return;
    }
    if (s.style === "points") {
      for (const [xv, yv] of pointsAt(col))
        out.push(
          `<circle cx="${sx(xv).toFixed(1)}" cy="${sy(yv).toFixed(1)}" r="3.5" fill="#ffffff" stroke="${s.colour}" stroke-width="1.5"/>`,
        );
      return;
    }
    // A null breaks the line; undefined (a value only other series have) is joined over.
    let d = "";
    let pen = false;
    p.x.forEach((xv, i) => {
      const yv = col[i];
      if (yv === undefined) return;
      if (yv === null || !Number.isFinite(xv) || !Number.isFinite(yv)) {
        pen = false;
        return;
      }
      d += `${pen ? "L" : "M"}${sx(xv).toFixed(1)} ${sy(yv).toFixed(1)} `;
      pen = true;
    });
    if (d)
      out.push(
        `<path d="${d.trim()}" fill="none" stroke="${s.colour}" stroke-width="1.75"${s.dash ? ' stroke-dasharray="5 3"' : ""}/>`,
      );
  });
  out.push(
    `<text x="${W - right}" y="${H - 12}" text-anchor="end" font-size="10" fill="${p.grid}">${esc("Runnel · model estimate")}</text>`,
  );
  out.push(`</svg>`);
  return out.join("\n");
}
