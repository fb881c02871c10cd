/**
 * Runnel's palette for code that draws (canvas plots, exported images): the
 * values of the theme tokens in app/globals.css (`@theme static`), read from the
 * page's styles, so the palette is written once. Browser only.
 */

/** The value of the theme token `--color-NAME`, e.g. `themeColour("moss-600")` → "#2f6748". */
export function themeColour(name: string): string {
  return getComputedStyle(document.documentElement).getPropertyValue(`--color-${name}`).trim();
}

/** Number of curve colours (--color-curve-1 … --color-curve-6). */
export const CURVE_COUNT = 6;

/** The colour of the `i`-th curve of a plot (cycling through the curve tokens). */
export function curveColour(i: number): string {
  return themeColour(`curve-${(i % CURVE_COUNT) + 1}`);
}

/** `colour` ("#rrggbb") at opacity `alpha` as "rgba(r,g,b,alpha)". */
export function withAlpha(colour: string, alpha: number): string {
  const m = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(colour);
  if (!m) return colour;
  return `rgba(${parseInt(m[1], 16)},${parseInt(m[2], 16)},${parseInt(m[3], 16)},${alpha})`;
}
