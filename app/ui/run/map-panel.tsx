"use client";

/** Maps: names with two indices (n3_4) at one point, or a probe over the grid of the last two sweeps. */
import { useMemo, useState } from "react";
import { indexedGroups } from "@/app/lib/indexed-names";
import type { PointData } from "@/app/lib/point-codec";
import type { SeriesView } from "@/app/lib/results";
import { HeatMap } from "@/app/ui/plots/heat-map";
import { meanOverSamples } from "./sweep-values";

export function MapPanel({ point, series }: { point: PointData; series: SeriesView }) {
  const maps = useMemo(() => {
    const out: {
      key: string;
      label: string;
      unit: string;
      values: (number | null)[][];
      rowLabel: string;
      colLabel: string;
    }[] = [];
    for (const gr of indexedGroups(point.nodes.names).grids) {
      out.push({
        key: `node:${gr.stem}`,
        label: `voltage(${gr.stem}·_·)`,
        unit: "V",
        values: gr.at.map((row) => row.map((k) => (k < 0 ? null : point.nodes.voltage[k]))),
        rowLabel: "row",
        colLabel: "column",
      });
    }
    for (const gr of indexedGroups(point.devices.names).grids) {
      out.push({
        key: `device:${gr.stem}`,
        label: `|current(${gr.stem}·_·)|`,
        unit: "A",
        values: gr.at.map((row) => row.map((k) => (k < 0 ? null : Math.abs(point.devices.current[k])))),
        rowLabel: "row",
        colLabel: "column",
      });
    }
    if (series.sweeps.length >= 2) {
      const [a, b] = series.sweeps.slice(-2);
      const samples = series.mismatch?.runs ?? 1;
      series.probes.forEach((name, j) => {
        const vals = meanOverSamples(series.probeValues[j], samples);
        const rows: (number | null)[][] = [];
        for (let i = 0; i < a.values.length; i++)
          rows.push(b.values.map((_, k) => vals[i * b.values.length + k] ?? null));
        out.push({
          key: `probe:${name}`,
          label: `${name} over ${a.param} × ${b.param}`,
          unit: "",
          values: rows,
          rowLabel: a.param,
          colLabel: b.param,
        });
      });
    }
    return out;
  }, [point, series]);
  const [key, setKey] = useState<string | null>(null);
  const [log, setLog] = useState(false);
  const m = maps.find((x) => x.key === key) ?? maps.find((x) => x.unit === "A") ?? maps[0];
  if (!m)
    return (
      <p className="text-stone-600">
        No 2-D grid here: a map needs names with two indices (n3_4, as nested for loops make them) or a grid of two
        sweeps.
      </p>
    );
  return (
    <div className="space-y-2">
      <div className="flex flex-wrap items-center gap-4 text-sm">
        <label className="flex items-center gap-2">
          map of
          <select
            value={m.key}
            onChange={(e) => setKey(e.target.value)}
            className="rounded border border-stone-300 bg-white px-1 py-0.5"
            aria-label="Map of"
          >
            {maps.map((x) => (
              <option key={x.key} value={x.key}>
                {x.label}
              </option>
            ))}
          </select>
        </label>
        <label className="flex items-center gap-1">
          <input type="checkbox" checked={log} onChange={(e) => setLog(e.target.checked)} /> log scale
        </label>
      </div>
      <HeatMap title={m.label} values={m.values} unit={m.unit} rowLabel={m.rowLabel} colLabel={m.colLabel} log={log} />
    </div>
  );
}
