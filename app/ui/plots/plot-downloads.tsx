"use client";

import { useState } from "react";

export interface PlotDownloadsProps {
  /** What the downloads are of, for assistive technology ("current out5 over vh"). */
  title: string;
  png(): Promise<void>;
  svg(): void;
  csv(): void;
}

/** The row of download buttons under a plot: the picture as PNG or SVG, its data as CSV. */
export function PlotDownloads({ title, png, svg, csv }: PlotDownloadsProps) {
  const [problem, setProblem] = useState<string | null>(null);
  const button = "rounded border border-stone-300 bg-white px-2 py-0.5 hover:border-moss-500 hover:text-moss-700";
  return (
    <div className="flex flex-wrap items-center gap-1.5 text-xs text-stone-600" aria-label={`Download ${title}`}>
      <span>download</span>
      <button type="button" className={button} onClick={() => png().catch((e: Error) => setProblem(e.message))}>
        PNG
      </button>
      <button type="button" className={button} onClick={svg}>
        SVG
      </button>
      <button type="button" className={button} onClick={csv}>
        CSV
      </button>
      {problem ? <span className="text-ember-500">{problem}</span> : null}
    </div>
  );
}
