import { describe, expect, it } from "vitest";
import type { SeriesView } from "../../app/lib/results";
import { serverPalette, themeToken } from "../../app/lib/theme-tokens";
import { firstLook, firstLookMap } from "../../app/ui/run/first-look";
import { MAX_CURVES, openingView } from "../../app/ui/run/probe-plot";
import { formatValue } from "../../app/lib/format";

/**
 * The plot the run page's server draws before the scripts run: the Probes view's opening plot (the probe that
 * varies most, currents on a log axis) as SVG. The series here are made up for the drawing, not physics.
 */
function series(sweeps: { param: string; values: number[] }[], probes: Record<string, [string | null, number[]]>) {
  const n = sweeps.reduce((k, s) => k * s.values.length, 1);
  const names = Object.keys(probes);
  return {
    params: sweeps.map((s) => s.param),
    probes: names,
    probeUnits: names.map((p) => probes[p][0]),
    paramUnits: sweeps.map(() => "V"),
    sweeps: sweeps.map((s) => ({ ...s, log: false })),
    mismatch: null,
    point: Array.from({ length: n }, (_, i) => i),
    sample: Array.from({ length: n }, () => 0),
    paramValues: [],
    probeValues: names.map((p) => probes[p][1]),
    method: [],
    iterations: [],
    residual: [],
    error: [],
    expectations: [],
    passed: [],
    margins: [],
  } as unknown as SeriesView;
}

const vh = Array.from({ length: 50 }, (_, i) => 0.6 + i * 0.005);
const fmt = (v: number, u: string | null) => formatValue(v, u, { notation: "si" });

describe("the run page's first look", () => {
  it("opens on the probe that varies most, a current on a log axis, one path through every point", () => {
    const s = series([{ param: "vh", values: vh }], {
      vout: ["V", vh.map((v) => 0.3 + 0.01 * v)],
      iout: ["A", vh.map((v) => 1e-15 * Math.exp(v / 0.026))],
    });
    const view = openingView(s, fmt)!;
    expect(view.title).toBe("iout over vh");
    expect(view.yAxis).toMatchObject({ unit: "A", log: true, label: "current iout" });
    const look = firstLook(s, "si", serverPalette())!;
    expect(look.title).toBe("iout over vh");
    expect(look.svg).toContain("current iout (A)");
    expect(look.svg).toContain("vh (V)");
    const path = /<path d="([^"]+)" fill="none"/.exec(look.svg)![1];
    expect(path.match(/[ML]/g)!.length).toBe(50);
    // a 1e-15 A · e^(v / 26 mV) current over 0.6…0.845 V spans 10 µA … 130 mA: decade ticks in SI prefixes
    expect(look.svg).toMatch(/>10 µA</);
    expect(look.svg).toMatch(/>100 mA</);
    // coordinates to a tenth of a pixel
    expect(look.svg).not.toMatch(/ [xy][12]?="-?\d+\.\d\d/);
    expect(path).not.toMatch(/\.\d\d/);
    expect(look.svg).toContain(`stroke="${themeToken("curve-1")}"`);
  });

  it("draws one curve per value of the other sweep, at most MAX_CURVES, and leaves a gap where a point failed", () => {
    const other = Array.from({ length: 20 }, (_, i) => 0.5 + i * 0.01);
    const values: (number | null)[] = [];
    for (const a of other) for (const v of vh) values.push(v === vh[10] ? null : a * v);
    const s = series(
      [
        { param: "vg", values: other },
        { param: "vh", values: vh },
      ],
      { vx: ["V", values as number[]] },
    );
    const look = firstLook(s, "si", serverPalette())!;
    const paths = [...look.svg.matchAll(/<path d="([^"]+)" fill="none"/g)].map((m) => m[1]);
    expect(paths).toHaveLength(MAX_CURVES);
    // the failed point breaks each line in two
    expect(paths[0].match(/M/g)).toHaveLength(2);
    expect(look.svg).toContain("vg = 500 mV");
  });

  it("has nothing to draw without sweeps or probes", () => {
    expect(firstLook(series([], { vx: ["V", [1]] }), "si", serverPalette())).toBeNull();
    expect(firstLook(series([{ param: "vh", values: vh }], {}), "si", serverPalette())).toBeNull();
  });

  it("takes its colours from the theme's tokens in app/globals.css", () => {
    expect(themeToken("curve-1")).toMatch(/^#[0-9a-f]{6}$/i);
    expect(serverPalette().curves).toHaveLength(6);
    expect(themeToken("no-such-token")).toBe("var(--color-no-such-token)");
  });
});

describe("the run page's first look of a grid", () => {
  // a 4 × 3 grid of nodes g{i}_{j} with a channel m{i}_{j} at each, currents 10^-(i+j) pA (made up for the drawing)
  const nodes: string[] = [];
  const voltage: number[] = [];
  const devices: string[] = [];
  const current: number[] = [];
  for (let i = 0; i < 4; i++)
    for (let j = 0; j < 3; j++) {
      nodes.push(`g${i}_${j}`);
      voltage.push(0.1 * i + 0.01 * j);
      devices.push(`m${i}_${j}`);
      current.push(-1e-12 * 10 ** -(i + j));
    }
  nodes.push("vdd");
  voltage.push(1.8);
  const point = { nodes: { names: nodes, voltage }, devices: { names: devices, current } };

  it("opens on the devices' current magnitudes on a log scale, with the grid's indices on its axes", () => {
    const look = firstLookMap(point, series([], {}), "si", serverPalette())!;
    expect(look.view).toBe("map");
    expect(look.title).toBe("|current m·_·|");
    // 12 cells coloured, row and column indices, the legend in amperes from 1 pA down to 1 zA (10^-(3+2) pA)
    expect(look.svg.match(/M\d+ \d+h1v1h-1z/g)).toHaveLength(12);
    expect(look.svg).toContain("i of mi_j");
    expect(look.svg).toContain("1 pA");
    expect(look.svg).toContain("10 aA");
  });

  it("has nothing to draw when no names form a grid", () => {
    const flat = { nodes: { names: ["a", "b"], voltage: [0, 1] }, devices: { names: ["m1"], current: [1e-9] } };
    expect(firstLookMap(flat, series([], {}), "si", serverPalette())).toBeNull();
  });
});
