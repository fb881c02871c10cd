"use client";

/**
 * Maps: names with two indices (n3_4) at one point, or a probe over the grid
 * of the last two sweeps, with labelled axes (the indices, or the sweep
 * values in their unit) and a colour legend in the value's unit. Currents open
 * on a log scale.
 */
import { useMemo, useState } from "react";
import type { PointData } from "@/app/lib/point-codec";
import type { SeriesView } from "@/app/lib/results";
import { useFormat } from "@/app/ui/notation";
import { HeatMap } from "@/app/ui/plots/heat-map";
import { mapSpecs, openingMap } from "./map-specs";
import { OptionSelect } from "./option-select";

export function MapPanel({ point, series }: { point: PointData; series: SeriesView }) {
  const fmt = useFormat();
  const maps = useMemo(() => mapSpecs(point, series, fmt), [point, series, fmt]);
  const [key, setKey] = useState<string | null>(null);
  const m = maps.find((x) => x.key === key) ?? openingMap(maps);
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
