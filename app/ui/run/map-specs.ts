/**
 * The maps a run's point offers, as pure data: node voltages and device currents of names with two indices
 * (n3_4), and each probe over the grid of the last two sweeps; the Map view (map-panel.tsx) and the map the
 * server draws into a grid's run page (first-look.ts) both use them.
 */
import { indexedGroups } from "@/app/lib/indexed-names";
import type { SeriesView } from "@/app/lib/results";
import { quantityLabel } from "@/app/ui/plots/axis";
import type { MapAxis } from "@/app/ui/plots/plot-types";
import type { ParamFormatter } from "./probe-plot";
import { meanOverSamples, paramUnit, probeUnit } from "./sweep-values";

export interface MapSpec {
  key: string;
  label: string;
  unit: string | null;
  values: (number | null)[][];
  rows: MapAxis;
  cols: MapAxis;
}

/** What the maps need of a point: its node voltages and device currents by name. */
export interface MapPoint {
  nodes: { names: string[]; voltage: ArrayLike<number> };
  devices: { names: string[]; current: ArrayLike<number> };
}

const range = (n: number) => Array.from({ length: n }, (_, i) => String(i));

export function mapSpecs(point: MapPoint, series: SeriesView, fmt: ParamFormatter): MapSpec[] {
  const out: MapSpec[] = [];
  for (const gr of indexedGroups(point.nodes.names).grids) {
    out.push({
      key: `node:${gr.stem}`,
      label: `voltage ${gr.stem}·_·`,
      unit: "V",
      values: gr.at.map((row) => row.map((k) => (k < 0 ? null : point.nodes.voltage[k]))),
      rows: { label: `i of ${gr.stem}i_j`, ticks: range(gr.rows) },
      cols: { label: `j of ${gr.stem}i_j`, ticks: range(gr.cols) },
    });
  }
  for (const gr of indexedGroups(point.devices.names).grids) {
    out.push({
      key: `device:${gr.stem}`,
      label: `|current ${gr.stem}·_·|`,
      unit: "A",
      values: gr.at.map((row) => row.map((k) => (k < 0 ? null : Math.abs(point.devices.current[k])))),
      rows: { label: `i of ${gr.stem}i_j`, ticks: range(gr.rows) },
      cols: { label: `j of ${gr.stem}i_j`, ticks: range(gr.cols) },
    });
  }
  if (series.sweeps.length >= 2) {
    const [a, b] = series.sweeps.slice(-2);
    const samples = series.mismatch?.runs ?? 1;
    const ua = paramUnit(series, a.param);
    const ub = paramUnit(series, b.param);
    series.probes.forEach((name, j) => {
      const vals = meanOverSamples(series.probeValues[j], samples);
      const rows: (number | null)[][] = [];
      for (let i = 0; i < a.values.length; i++)
        rows.push(b.values.map((_, k) => vals[i * b.values.length + k] ?? null));
      const unit = probeUnit(series, j);
      out.push({
        key: `probe:${name}`,
        label: `${quantityLabel(name, unit)} over ${a.param} × ${b.param}`,
        unit,
        values: rows,
        rows: { label: a.param, unit: ua, ticks: a.values.map((v) => fmt(v, ua)) },
        cols: { label: b.param, unit: ub, ticks: b.values.map((v) => fmt(v, ub)) },
      });
    });
  }
  return out;
}

/** The map the view opens on: a current if there is one, else the first. */
export function openingMap(maps: MapSpec[]): MapSpec | undefined {
  return maps.find((x) => x.unit === "A") ?? maps[0];
}
