/** A heat map as a standalone SVG document (the Map's SVG and PNG downloads): cells, axes, legend. Pure. */
import { formatValue, type Notation } from "@/app/lib/format";
import { axisTitle } from "./axis";
import { labelEvery, mapColour, mapPosition, mapStops } from "./map-colour";
import type { AxisSpec } from "./plot-types";

export interface HeatMapSvg {
  title: string;
  values: (number | null)[][];
  rows: { label: string; unit?: string | null; ticks: string[] };
  cols: { label: string; unit?: string | null; ticks: string[] };
  value: AxisSpec;
  lo: number;
  hi: number;
  notation: Notation;
  ink: string;
  unknown: string;
}

const esc = (s: string) => s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");

export function heatMapSvg(p: HeatMapSvg): { svg: string; width: number; height: number } {
  const nr = p.values.length;
  const nc = nr ? Math.max(...p.values.map((r) => r.length)) : 0;
  const cell = Math.max(2, Math.min(40, Math.floor(640 / Math.max(nr, nc, 1))));
  const left = 80;
  const top = 36;
  const w = cell * nc;
  const h = cell * nr;
  const width = left + w + 150;
  const height = top + h + 56;
  const out: string[] = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="Inter, system-ui, sans-serif" font-size="11">`,
    `<rect width="${width}" height="${height}" fill="#ffffff"/>`,
    `<text x="${left}" y="20" font-size="14" font-weight="600" fill="${p.ink}">${esc(p.title)}</text>`,
  ];
  // Cells in units of one cell, one path per colour (the colour map's 256 steps): a 32 × 32 map is about 20 kB of
  // text instead of 75 (the run page's server sends this drawing of a grid's map in the page).
  const byColour = new Map<string, string[]>();
  for (let i = 0; i < nr; i++)
    for (let j = 0; j < nc; j++) {
      const v = p.values[i][j];
      const t = v === null || v === undefined ? NaN : mapPosition(v, p.lo, p.hi, !!p.value.log);
      const colour = Number.isNaN(t) ? p.unknown : mapColour(Math.round(t * 255) / 255);
      let cells = byColour.get(colour);
      if (!cells) byColour.set(colour, (cells = []));
      cells.push(`M${j} ${i}h1v1h-1z`);
    }
  out.push(`<g transform="translate(${left} ${top}) scale(${cell})" shape-rendering="crispEdges">`);
  for (const [colour, cells] of byColour) out.push(`<path fill="${colour}" d="${cells.join("")}"/>`);
  out.push(`</g>`);
  out.push(
    `<rect x="${left}" y="${top}" width="${w}" height="${h}" fill="none" stroke="${p.ink}"/>`,
    `<g fill="${p.ink}">`,
  );
  const re = labelEvery(nr, Math.max(2, Math.floor(h / 16)));
  p.rows.ticks.forEach((t, i) => {
    if (i % re === 0 || i === nr - 1)
      out.push(`<text x="${left - 6}" y="${top + i * cell + cell / 2 + 4}" text-anchor="end">${esc(t)}</text>`);
  });
  const ce = labelEvery(nc, Math.max(2, Math.floor(w / 56)));
  p.cols.ticks.forEach((t, j) => {
    if (j % ce === 0 || j === nc - 1)
      out.push(`<text x="${left + j * cell + cell / 2}" y="${top + h + 16}" text-anchor="middle">${esc(t)}</text>`);
  });
  out.push(
    `<text x="${left + w / 2}" y="${top + h + 40}" text-anchor="middle" font-size="12">${esc(axisTitle({ label: p.cols.label, unit: p.cols.unit ?? null }))}</text>`,
    `<text transform="translate(16 ${top + h / 2}) rotate(-90)" text-anchor="middle" font-size="12">${esc(axisTitle({ label: p.rows.label, unit: p.rows.unit ?? null }))}</text>`,
  );
  const lx = left + w + 24;
  const lh = Math.max(120, Math.min(h, 240));
  out.push(
    `<defs><linearGradient id="scale" x1="0" y1="1" x2="0" y2="0">${mapStops()
      .map((c, k, a) => `<stop offset="${k / (a.length - 1)}" stop-color="${c}"/>`)
      .join("")}</linearGradient></defs>`,
    `<text x="${lx}" y="${top - 8}" font-size="12">${esc(axisTitle(p.value))}</text>`,
    `<rect x="${lx}" y="${top}" width="14" height="${lh}" fill="url(#scale)" stroke="${p.ink}" stroke-width="0.5"/>`,
  );
  const ticks = p.value.log ? [p.hi, Math.sqrt(p.lo * p.hi), p.lo] : [p.hi, (p.lo + p.hi) / 2, p.lo];
  ticks.forEach((v, k) =>
    out.push(
      `<text x="${lx + 20}" y="${top + (k * lh) / 2 + (k === 0 ? 9 : k === 2 ? 0 : 4)}">${esc(formatValue(v, p.value.unit, { notation: p.notation }))}</text>`,
    ),
  );
  out.push(`</g>`, `</svg>`);
  return { svg: out.join("\n"), width, height };
}
