/** Helpers over a run's series: units of swept params, means over mismatch samples. */

/** Sweep values and unit of a param name (temp is in kelvin, params carry no unit we know). */
export function paramUnit(name: string): string {
  return name === "temp" ? "K" : "";
}

/** Mean over the samples of each grid point (the series has samples fastest). */
export function meanOverSamples(values: (number | null)[], samples: number): (number | null)[] {
  if (samples === 1) return values;
  const out: (number | null)[] = [];
  for (let g = 0; g * samples < values.length; g++) {
    let sum = 0;
    let n = 0;
    for (let s = 0; s < samples; s++) {
      const v = values[g * samples + s];
      if (v !== null && v !== undefined) {
        sum += v;
        n++;
      }
    }
    out.push(n ? sum / n : null);
  }
  return out;
}
