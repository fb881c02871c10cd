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

/**
 * A uPlot on `el`, for a plot component's effect: `build` makes it once uPlot has loaded (not if the effect was
 * cleaned up first); with `fit`, the plot follows the element's width (`fit()` gives it) at `height`. Returns the
 * effect's cleanup, which destroys the plot.
 */
export function mountUplot(
  el: HTMLElement,
  build: (uPlot: typeof uPlotType) => uPlotType,
  fit?: { width: () => number; height: number },
): () => void {
  let plot: uPlotType | null = null;
  let gone = false;
  void loadUplot().then((uPlot) => {
    if (!gone) plot = build(uPlot);
  });
  const observer = fit ? new ResizeObserver(() => plot?.setSize({ width: fit.width(), height: fit.height })) : null;
  observer?.observe(el);
  return () => {
    gone = true;
    observer?.disconnect();
    plot?.destroy();
  };
}
