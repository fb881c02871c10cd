/**
 * What the plot components draw (app/ui/plots): curves over a shared x,
 * points-only marks at their own x, shaded bands, and the axes they sit on.
 * Shared by LinePlot, its PNG/SVG/CSV exports and the panels that feed it.
 */

export interface Curve {
  label: string;
  values: (number | null)[];
  /** Draw dashed (e.g. quantiles beside a mean). */
  dash?: boolean;
  /** Index into the plot's curve colours; default the curve's position. */
  colour?: number;
}

/** Points-only series at their own x (e.g. bench data), merged onto the plot's x axis. */
export interface Marks {
  label: string;
  x: number[];
  y: number[];
  /** Theme colour token of the points (app/globals.css `--color-NAME`), e.g. "measured". */
  colour: string;
}

/** A shaded region between two of the plot's curves (indices into `curves`), e.g. μ ± σ. */
export interface Band {
  upper: number;
  lower: number;
}

export interface AxisSpec {
  /** What the axis shows, as a reader says it: "current out5", "vh", "tap index". */
  label: string;
  /** Unit symbol ("V", "A", "W", "K"), "" for a ratio, null when not known. */
  unit: string | null;
  /** Base-10 log scale; values ≤ 0 are left out (the plot says how many). */
  log?: boolean;
  /** The axis counts (an index, a sample): integer ticks only. */
  integer?: boolean;
}

export interface MapAxis {
  /** What runs along the axis: "row", "column", a sweep's param. */
  label: string;
  unit?: string | null;
  /** One label per row (or column): the index in node names, or the sweep value. */
  ticks: string[];
}
