"use client";

import { useState } from "react";
import { downloadBlob, downloadText, fileStem, svgToPng } from "./download";

/** A plot drawn as a standalone SVG document of the given size. */
export interface PlotPicture {
  svg: string;
  width: number;
  height: number;
}

export interface PlotDownloadsProps {
  /** What the downloads are of; also their file name ("current out5 over vh" → current-out5-over-vh.png). */
  title: string;
  /** The picture as SVG (the PNG is the same picture rasterised at twice its size). */
  picture(): PlotPicture;
  /** The plotted data as CSV text. */
  csv(): string;
}

/** The row of download buttons under a plot: the picture as PNG or SVG, its data as CSV. */
export function PlotDownloads({ title, picture, csv }: PlotDownloadsProps) {
  const [problem, setProblem] = useState<string | null>(null);
  const stem = fileStem(title);
  const button = "rounded border border-stone-300 bg-white px-2 py-0.5 hover:border-moss-500 hover:text-moss-700";
  const png = async () => {
    const p = picture();
    downloadBlob(`${stem}.png`, await svgToPng(p.svg, p.width, p.height));
  };
  return (
    <div className="flex flex-wrap items-center gap-1.5 text-xs text-stone-600" aria-label={`Download ${title}`}>
      <span>download</span>
      <button type="button" className={button} onClick={() => png().catch((e: Error) => setProblem(e.message))}>
        PNG
      </button>
      <button
        type="button"
        className={button}
        onClick={() => downloadText(`${stem}.svg`, "image/svg+xml", picture().svg)}
      >
        SVG
      </button>
      <button type="button" className={button} onClick={() => downloadText(`${stem}.csv`, "text/csv", csv())}>
        CSV
      </button>
      {problem ? <span className="text-ember-500">{problem}</span> : null}
    </div>
  );
}
