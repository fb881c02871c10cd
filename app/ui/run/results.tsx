"use client";

/**
 * A run's results: the point chooser (sweep point, mismatch sample) and the
 * tabs of result views, fed by the series (all points' probes) and the chosen
 * point's binary record.
 */
import { HoverLink } from "@/app/ui/hover-link";
import { useMemo, useState } from "react";
import useSWR from "swr";
import { decodePoint, pointData } from "@/app/lib/point-codec";
import type { RunLayout, SeriesView } from "@/app/lib/results";
import type { RunRow } from "@/app/lib/runs";
import { getBytes, getJson } from "@/app/ui/fetch";
import { useBenchData } from "./bench-data";
import { DevicesPanel } from "./devices-panel";
import type { FirstLook } from "./first-look";
import { FirstLookFigure } from "./first-look-figure";
import { LoadingNote } from "./loading-note";
import { PointWarnings } from "./point-warnings";
import { layoutKey, pointKey } from "./result-keys";
import { MapPanel } from "./map-panel";
import { OperatingPanel } from "./operating-panel";
import { ProbesPanel } from "./probes-panel";
import { ProfilePanel } from "./profile-panel";
import { SeekPanel } from "./seek-panel";
import { SensitivityPanel } from "./sensitivity-panel";
import { SpreadPanel } from "./spread-panel";
import { paramUnit } from "./sweep-values";
import { useFormat } from "@/app/ui/notation";

export type Tab = "probes" | "operating" | "devices" | "profile" | "map" | "spread" | "sensitivity" | "seek";

export function Results({
  runId,
  run,
  series,
  canRun,
  firstLook,
}: {
  runId: string;
  run: RunRow;
  series: SeriesView;
  canRun: boolean;
  /** The server's drawing of the view the page opens on: a map opens the Map view, and stands in until it draws. */
  firstLook?: FirstLook | null;
}) {
  const fmt = useFormat();
  const samples = series.mismatch?.runs ?? 1;
  const gridPoints = Math.max(1, Math.ceil(run.pointsTotal / samples));
  const [gridPoint, setGridPoint] = useState(0);
  const [sample, setSample] = useState(0);
  const point = Math.min(gridPoint * samples + sample, Math.max(0, series.point.length - 1));
  const [tab, setTab] = useState<Tab>(
    series.sweeps.length ? "probes" : firstLook?.view === "map" ? "map" : "operating",
  );
  const [deviceFilter, setDeviceFilter] = useState("");
  const [onlyFlagged, setOnlyFlagged] = useState(false);
  const layout = useSWR<{ layout: RunLayout }>(layoutKey(runId), getJson, {
    revalidateOnFocus: false,
  });
  const bytes = useSWR<ArrayBuffer>(pointKey(runId, point), getBytes, {
    keepPreviousData: true,
    revalidateOnFocus: false,
  });
  const current = useMemo(
    () => (layout.data && bytes.data ? pointData(layout.data.layout, decodePoint(bytes.data)) : undefined),
    [layout.data, bytes.data],
  );
  const bench = useBenchData(run.networkId, runId);
  const tabs: [Tab, string][] = [
    ["probes", "Probes"],
    ["operating", "Operating point"],
    ["devices", "Devices"],
    ["profile", "Profile"],
    ["map", "Map"],
  ];
  if (series.mismatch) tabs.push(["spread", "Spread"]);
  tabs.push(["sensitivity", "Sensitivity"], ["seek", "Goal-seek"]);
  return (
    <section aria-label="Results" className="space-y-4">
      {run.pointsTotal > 1 ? (
        <div className="flex flex-wrap items-center gap-4 rounded border border-stone-200 bg-white p-3 text-sm">
          {gridPoints > 1 ? (
            <label className="flex items-center gap-2">
              <span className="text-stone-600">sweep point</span>
              <input
                type="range"
                min={0}
                max={gridPoints - 1}
                value={gridPoint}
                onChange={(e) => setGridPoint(Number(e.target.value))}
                aria-label="Sweep point"
              />
              <span className="tabular w-16">
                {gridPoint + 1} / {gridPoints}
              </span>
            </label>
          ) : null}
          {samples > 1 ? (
            <label className="flex items-center gap-2">
              <span className="text-stone-600">mismatch sample</span>
              <input
                type="number"
                min={0}
                max={samples - 1}
                value={sample}
                onChange={(e) => setSample(Math.max(0, Math.min(samples - 1, Number(e.target.value) || 0)))}
                className="w-20 rounded border border-stone-300 px-1"
                aria-label="Mismatch sample"
              />
            </label>
          ) : null}
          {current ? (
            <span className="tabular text-stone-700" data-slot="point-params">
              {series.sweeps
                .map((s) => `${s.param} = ${fmt(current.params[s.param], paramUnit(series, s.param))}`)
                .join(", ")}
              {samples > 1 ? ` · sample ${current.sample}` : ""}
            </span>
          ) : null}
        </div>
      ) : null}
      {current ? (
        <PointWarnings
          point={current}
          onShow={(pattern) => {
            setDeviceFilter(pattern);
            setOnlyFlagged(true);
            setTab("devices");
          }}
        />
      ) : null}
      <div role="tablist" aria-label="Result views" className="flex flex-wrap gap-1 border-b border-stone-300">
        {tabs.map(([id, label]) => (
          <button
            key={id}
            role="tab"
            type="button"
            aria-selected={tab === id}
            onClick={() => setTab(id)}
            className={`-mb-px rounded-t border px-3 py-1.5 text-sm ${tab === id ? "border-stone-300 border-b-white bg-white font-medium text-moss-700" : "border-transparent text-stone-600 hover:text-moss-700"}`}
          >
            {label}
          </button>
        ))}
      </div>
      <div role="tabpanel" aria-label={tabs.find((t) => t[0] === tab)?.[1]}>
        {tab === "probes" ? <ProbesPanel series={series} bench={bench} /> : null}
        {tab === "operating" ? (
          current ? (
            <OperatingPanel point={current} probeUnits={series.probeUnits} />
          ) : (
            <LoadingNote />
          )
        ) : null}
        {tab === "devices" ? (
          current ? (
            <DevicesPanel
              point={current}
              filter={deviceFilter}
              onFilterChange={setDeviceFilter}
              onlyFlagged={onlyFlagged}
              onOnlyFlaggedChange={setOnlyFlagged}
            />
          ) : (
            <LoadingNote />
          )
        ) : null}
        {tab === "profile" ? (
          current ? (
            <ProfilePanel point={current} bench={bench} probeUnits={series.probeUnits} />
          ) : (
            <LoadingNote />
          )
        ) : null}
        {tab === "map" ? (
          current ? (
            <MapPanel point={current} series={series} />
          ) : firstLook?.view === "map" ? (
            <FirstLookFigure look={firstLook} />
          ) : (
            <LoadingNote />
          )
        ) : null}
        {tab === "spread" ? <SpreadPanel series={series} gridPoint={gridPoint} /> : null}
        {tab === "sensitivity" ? <SensitivityPanel runId={runId} /> : null}
        {tab === "seek" ? <SeekPanel runId={runId} canRun={canRun} units={series} /> : null}
      </div>
      {current?.error ? <p className="text-sm text-ember-500">This point was not solved: {current.error}</p> : null}
      <p className="text-xs text-stone-500">
        Permalink: <HoverLink href={`/runs/${runId}`}>/runs/{runId}</HoverLink>
      </p>
    </section>
  );
}
