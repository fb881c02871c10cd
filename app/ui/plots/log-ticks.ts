/**
 * Ranges and ticks of a base-10 log axis, for any positive range (currents in
 * these networks span 10–20 decades). uPlot's own log splits step through a
 * decade by adding its first value and round each step to the decimals of the
 * step it expects; past about 1e-16 a decade boundary no longer equals that
 * step exactly, the rounding returns 0 and the loop never ends (a 14-decade
 * current froze the tab). Here every value is written as the decimal literal
 * `${m}e${e}`, so it is exact to the last bit and nothing accumulates.
 */

/** 10^e as the exact double of the literal "1e{e}" (Math.pow(10, -24) is 1.0000000000000001e-24). */
export function decade(e: number): number {
  return Number(`1e${e}`);
}

/** The whole decades around [min, max] (both positive): [10^floor(log min), 10^ceil(log max)], at least one decade. */
export function logRange(min: number, max: number): [number, number] {
  if (!(min > 0) || !(max > 0) || !Number.isFinite(min) || !Number.isFinite(max)) return [1, 10];
  let lo = Math.floor(Math.log10(min) + 1e-9);
  let hi = Math.ceil(Math.log10(max) - 1e-9);
  if (hi <= lo) hi = lo + 1;
  // Guard against the shortest doubles: decades stay within what a double holds.
  lo = Math.max(lo, -320);
  hi = Math.min(hi, 308);
  return [decade(lo), decade(hi)];
}

/** Most decades a log axis labels; beyond it every k-th decade is labelled (see labelledDecade). */
export const MAX_LABELLED_DECADES = 8;

/**
 * Tick values of a log axis over [min, max]: every decade, and 2…9 times it
 * while the axis spans at most `minorUpTo` decades (beyond, decades only). At
 * most (decades + 1) · 9 values, so a 300-decade range is still a few thousand.
 */
export function logSplits(min: number, max: number, minorUpTo = 6): number[] {
  if (!(min > 0) || !(max > min)) return [];
  const lo = Math.floor(Math.log10(min) + 1e-9);
  const hi = Math.ceil(Math.log10(max) - 1e-9);
  const minor = hi - lo <= minorUpTo;
  const out: number[] = [];
  for (let e = lo; e <= hi; e++) {
    for (let m = 1; m <= (minor ? 9 : 1); m++) {
      const v = Number(`${m}e${e}`);
      if (v >= min * (1 - 1e-12) && v <= max * (1 + 1e-12)) out.push(v);
    }
  }
  return out;
}

/** True when `v` is a power of ten. */
export function isDecade(v: number): boolean {
  if (!(v > 0)) return false;
  const e = Math.round(Math.log10(v));
  return v === decade(e);
}

/** Every how many decades a label goes, for an axis spanning `decades` decades. */
export function decadeStep(decades: number, maxLabels = MAX_LABELLED_DECADES): number {
  return Math.max(1, Math.ceil(decades / maxLabels));
}

/** True when the tick `v` gets a label on an axis labelling every `step`-th decade. */
export function labelledDecade(v: number, step: number): boolean {
  if (!isDecade(v)) return false;
  return Math.round(Math.log10(v)) % step === 0;
}
