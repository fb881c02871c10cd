/** What the plot components draw: curves over a shared x, and points-only marks at their own x. */

export interface Curve {
  label: string;
  values: (number | null)[];
}

/** Points-only series at their own x (e.g. bench data), merged onto the plot's x axis. */
export interface Marks {
  label: string;
  x: number[];
  y: number[];
  /** Theme colour token of the points (app/globals.css `--color-NAME`), e.g. "measured". */
  colour: string;
}
