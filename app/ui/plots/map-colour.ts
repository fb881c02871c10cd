/** Colour of t in [0, 1] on Runnel's map scale: deep slate → moss → pale straw. */
export function mapColour(t: number): string {
  const stops = [
    [31, 38, 64],
    [47, 103, 72],
    [160, 170, 80],
    [246, 238, 200],
  ];
  const x = Math.max(0, Math.min(1, t)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  const c = stops[i].map((a, k) => Math.round(a + f * (stops[i + 1][k] - a)));
  return `rgb(${c[0]},${c[1]},${c[2]})`;
}
