"use client";

/** One point's values along an index (x1, x2, … as a for loop names them), with bench data matched to indexed probes. */
import { useMemo, useState } from "react";
import { indexedGroups } from "@/app/lib/indexed-names";
import type { PointData } from "@/app/lib/point-codec";
import { LinePlot } from "@/app/ui/plots/line-plot";
import type { Curve } from "@/app/ui/plots/plot-types";
import { measuredMarks, siUnit, type BenchData } from "./bench-data";
import { BenchDataSelect } from "./bench-data-select";
import { BenchFigures } from "./bench-figures";
import { OptionSelect } from "./option-select";

/** The probe stem of a profile overlay's `against` ("i{k}" → "i"), else null. */
function profileStem(against: string): string | null {
  return against.endsWith("{k}") ? against.slice(0, -3) : null;
}

export interface ProfilePanelProps {
  point: PointData;
  bench: BenchData;
  /** Unit of each of the point's probes (the series' probeUnits, same order); null where not known. */
  probeUnits: (string | null)[];
}

export function ProfilePanel({ point, bench, probeUnits }: ProfilePanelProps) {
  const groups = useMemo(() => {
    const nodes = indexedGroups(point.nodes.names).profiles.map((p) => ({
      key: `node:${p.stem}`,
      label: `voltage(${p.stem}·)`,
      unit: "V",
      index: p.index,
      values: p.at.map((k) => point.nodes.voltage[k]),
    }));
    const devs = indexedGroups(point.devices.names).profiles.map((p) => ({
      key: `device:${p.stem}`,
      label: `current(${p.stem}·)`,
      unit: "A",
      index: p.index,
      values: p.at.map((k) => point.devices.current[k]),
    }));
    // Indexed probes (i0, i1, … as a for loop writes them): what a profile overlay compares bench data with.
    const probes = indexedGroups(point.probes.names).profiles.map((p) => ({
      key: `probe:${p.stem}`,
      label: `probe ${p.stem}·`,
      unit: probeUnits[p.at[0]] ?? null,
      index: p.index,
      values: p.at.map((k) => point.probes.value[k]),
    }));
    return [...nodes, ...devs, ...probes] as {
      key: string;
      label: string;
      unit: string | null;
      index: number[];
      values: number[];
    }[];
  }, [point, probeUnits]);
  // null: follow the probes the chosen bench data is matched to (else the first current profile).
  const [key, setKey] = useState<string | null>(null);
  const [log, setLog] = useState(true);
  const matchedKey = bench.overlay?.series
    .map((s) => profileStem(s.against))
    .find((stem) => stem !== null && groups.some((x) => x.key === `probe:${stem}`));
  const g =
    groups.find((x) => x.key === key) ??
    groups.find((x) => x.key === `probe:${matchedKey}`) ??
    groups.find((x) => x.unit === "A") ??
    groups[0];
  // The overlay route answers with a profile only for an operating point; its series are drawn on the probes they are matched to.
  const onPlot = useMemo(
    () => bench.overlay?.series.filter((s) => `probe:${profileStem(s.against)}` === g?.key) ?? [],
    [bench.overlay, g?.key],
  );
  const marks = useMemo(() => measuredMarks(bench, onPlot), [bench, onPlot]);
  const curves = useMemo<Curve[]>(
    () => (g ? [{ label: g.label, values: g.unit === "A" ? g.values.map((v) => Math.abs(v)) : g.values }] : []),
    [g],
  );
  const unit = g?.unit ?? (onPlot[0] ? siUnit(onPlot[0].unit) : null);
  const xAxis = useMemo(() => ({ label: "index", unit: null, integer: true }), []);
  const yAxis = useMemo(
    () => ({ label: g?.unit === "A" ? `|${g.label}|` : (g?.label ?? ""), unit, log }),
    [g, unit, log],
  );
  if (!g)
    return (
      <p className="text-stone-600">
        No indexed names here: a profile needs nodes or devices named with an index (x1, x2, … as a for loop makes
        them).
      </p>
    );

  return (
    <div className="space-y-2">
      <div className="flex flex-wrap items-center gap-4 text-sm">
        <OptionSelect
          word="profile of"
          label="Profile of"
          value={g.key}
          options={groups.map((x) => ({ value: x.key, text: `${x.label} (${x.index.length})` }))}
          onChange={setKey}
        />
        <label className="flex items-center gap-1">
          <input type="checkbox" checked={log} onChange={(e) => setLog(e.target.checked)} /> log axis
        </label>
        {g.unit === "A" ? <span className="text-stone-500">magnitude of the current</span> : null}
        <BenchDataSelect bench={bench} onChoose={() => setKey(null)} />
      </div>
      <LinePlot
        title={`${g.label} along the index`}
        x={g.index}
        xAxis={xAxis}
        yAxis={yAxis}
        curves={curves}
        marks={marks}
      />
      <BenchFigures bench={bench} shown={(s) => onPlot.includes(s)} />
    </div>
  );
}
