/**
 * uPlot, loaded once in the browser. The import starts when the first plot
 * module is evaluated (the page's hydration), not when its data has arrived:
 * on a first visit the chunk then loads beside the page's API requests
 * instead of after them. Never on the server (uPlot touches the DOM).
 */
import type uPlotType from "uplot";

let loading: Promise<typeof uPlotType> | null = null;

export function loadUplot(): Promise<typeof uPlotType> {
  loading ??= import("uplot").then((m) => m.default);
  return loading;
}

if (typeof window !== "undefined") void loadUplot();
