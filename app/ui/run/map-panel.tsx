"use client";

/**
 * Maps: names with two indices (n3_4) at one point, or a probe over the grid
 * of the last two sweeps, with labelled axes (the indices, or the sweep
 * values in their unit) and a colour legend in the value's unit. Currents open
 * on a log scale.
 */
import { useMemo, useState } from "react";
import { indexedGroups } from "@/app/lib/indexed-names";
import type { PointData } from "@/app/lib/point-codec";
import type { SeriesView } from "@/app/lib/results";
import { useFormat } from "@/app/ui/notation";
import { quantityLabel } from "@/app/ui/plots/axis";
import { HeatMap, type MapAxis } from "@/app/ui/plots/heat-map";
import { meanOverSamples, paramUnit, probeUnit } from "./sweep-values";
import { OptionSelect } from "./option-select";

interface MapSpec {
  key: string;
  label: string;
  unit: string | null;
  values: (number | null)[][];
  rows: MapAxis;
  cols: MapAxis;
}

const range = (n: number) => Array.from({ length: n }, (_, i) => String(i));

export function MapPanel({ point, series }: { point: PointData; series: SeriesView }) {
  const fmt = useFormat();
  const maps = useMemo(() => {
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
  }, [point, series, fmt]);
  const [key, setKey] = useState<string | null>(null);
  const m = maps.find((x) => x.key === key) ?? maps.find((x) => x.unit === "A") ?? maps[0];
  const [logChoice, setLogChoice] = useState<Record<string, boolean>>({});
  const log = m ? (logChoice[m.key] ?? m.unit === "A") : false;
  const value = useMemo(
    () => ({ label: m?.label.replace(/ over .*$/, "") ?? "", unit: m?.unit ?? null, log }),
    [m, log],
  );
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
        <OptionSelect
          word="map of"
          label="Map of"
          value={m.key}
          options={maps.map((x) => ({ value: x.key, text: x.label }))}
          onChange={setKey}
        />
        <label className="flex items-center gap-1">
          <input
            type="checkbox"
            checked={log}
            onChange={(e) => setLogChoice({ ...logChoice, [m.key]: e.target.checked })}
          />{" "}
          log scale
        </label>
      </div>
      <HeatMap title={m.label} values={m.values} rows={m.rows} cols={m.cols} value={value} />
    </div>
  );
}
