"use client";

/**
 * Probes over the sweep: a curve per combination of the other sweeps (opening
 * on the probe that varies most, currents on a log axis), bench data on its
 * matched probe, and the table of all points with units.
 */
import type { ColumnDef } from "@tanstack/react-table";
import { useMemo, useState } from "react";
import type { SeriesView } from "@/app/lib/results";
import { useFormat } from "@/app/ui/notation";
import { LinePlot } from "@/app/ui/plots/line-plot";
import { DataTable } from "@/app/ui/workbench/data-table";
import { measuredMarks, type BenchData } from "./bench-data";
import { BenchDataSelect } from "./bench-data-select";
import { BenchFigures } from "./bench-figures";
import { ProbeSelect } from "./probe-select";
import { OptionSelect } from "./option-select";
import { defaultXSweep, probeCurves, probeDefaultLog, probeXAxis } from "./probe-plot";
import { mostVaryingProbe, paramUnit, probeAxis, probeUnit } from "./sweep-values";

/** A column header with its unit: "iout (A)", "split" for a ratio or an unknown unit. */
const withUnit = (name: string, unit: string | null) => (unit ? `${name} (${unit})` : name);

/** Probe columns the table opens with (a 64-tap row has 66 probes). */
const PROBE_COLUMNS = 12;

export function ProbesPanel({ series, bench }: { series: SeriesView; bench: BenchData }) {
  const fmt = useFormat();
  // null: follow the probe the chosen bench data is matched to (else the probe that varies most).
  const [probeChoice, setProbeChoice] = useState<number | null>(null);
  const matchedProbe = bench.overlay?.series.map((s) => series.probes.indexOf(s.against)).find((j) => j >= 0);
  const varied = useMemo(() => mostVaryingProbe(series.probeValues), [series.probeValues]);
  const probe = probeChoice ?? matchedProbe ?? varied;
  const setProbe = setProbeChoice;
  const [logChoiceX, setLogX] = useState<boolean | null>(null);
  // Per probe: the reader's choice, else currents and wide positive ranges on a log axis.
  const [logChoice, setLogChoice] = useState<Record<number, boolean>>({});
  const logY = logChoice[probe] ?? probeDefaultLog(series, probe);
  const samples = series.mismatch?.runs ?? 1;
  // Along the sweep with the most values (the last on a tie): the richest curve.
  const [xSweep, setXSweep] = useState(() => defaultXSweep(series));
  const plot = useMemo(() => probeCurves(series, probe, xSweep, fmt), [series, probe, xSweep, fmt]);
  const logX = logChoiceX ?? series.sweeps[xSweep]?.log ?? false;
  const xAxis = useMemo(() => probeXAxis(series, xSweep, logX), [series, xSweep, logX]);
  const yAxis = useMemo(() => probeAxis(series, probe, logY), [series, probe, logY]);
  // Bench data is drawn on the probe it is matched to; the overlay route only answers for a run of one sweep.
  const onPlot = useMemo(
    () =>
      bench.overlay && series.sweeps.length === 1
        ? bench.overlay.series.filter((s) => s.against === series.probes[probe])
        : [],
    [bench.overlay, series, probe],
  );
  const marks = useMemo(() => measuredMarks(bench, onPlot), [bench, onPlot]);
  const rows = useMemo(
    () =>
      series.point.map((p, k) => ({
        name: String(p),
        sample: series.sample[k],
        params: series.sweeps.map((s) => series.paramValues[series.params.indexOf(s.param)]?.[k] ?? null),
        probes: series.probeValues.map((v) => v[k]),
        method: series.method[k],
        residual: series.residual[k],
      })),
    [series],
  );
  type Row = (typeof rows)[number];
  // A row of many taps has a probe per tap: the table opens on the first few and the plotted one, the rest on request.
  const [allProbes, setAllProbes] = useState(false);
  const shownProbes = useMemo(() => {
    const all = series.probes.map((_, j) => j);
    if (allProbes || all.length <= PROBE_COLUMNS) return all;
    const first = all.slice(0, PROBE_COLUMNS);
    return first.includes(probe) ? first : [...first, probe].sort((a, b) => a - b);
  }, [series.probes, allProbes, probe]);
  const columns = useMemo<ColumnDef<Row>[]>(
    () => [
      { id: "name", header: "point", accessorFn: (r) => Number(r.name), cell: (c) => c.getValue<number>() },
      ...(series.mismatch
        ? [{ id: "sample", header: "sample", accessorFn: (r: Row) => r.sample } as ColumnDef<Row>]
        : []),
      ...series.sweeps.map(
        (s, j) =>
          ({
            id: `param-${s.param}`,
            header: withUnit(s.param, paramUnit(series, s.param)),
            accessorFn: (r: Row) => r.params[j] ?? NaN,
            cell: (c: { getValue: () => unknown }) => fmt(c.getValue() as number, paramUnit(series, s.param)),
          }) as ColumnDef<Row>,
      ),
      ...shownProbes.map(
        (j) =>
          ({
            id: `probe-${series.probes[j]}`,
            header: withUnit(series.probes[j], probeUnit(series, j)),
            accessorFn: (r: Row) => r.probes[j] ?? NaN,
            cell: (c: { getValue: () => unknown }) => fmt(c.getValue() as number, probeUnit(series, j)),
          }) as ColumnDef<Row>,
      ),
      {
        id: "residual",
        header: "KCL residual (A)",
        accessorFn: (r) => r.residual ?? NaN,
        cell: (c) => fmt(c.getValue<number>(), "A"),
      },
    ],
    [series, fmt, shownProbes],
  );
  if (series.probes.length === 0)
    return (
      <p className="text-stone-600">
        This network has no probes. Add `probe NAME = …` statements to follow outputs over a sweep.
      </p>
    );
  return (
    <div className="space-y-4">
      {plot ? (
        <div className="space-y-2">
          <div className="flex flex-wrap items-center gap-4 text-sm">
            <ProbeSelect probes={series.probes} value={probe} onChange={setProbe} label="Probe to plot" />
            {series.sweeps.length > 1 ? (
              <OptionSelect
                word="along"
                label="Sweep along the x axis"
                value={String(xSweep)}
                options={series.sweeps.map((sw, k) => ({ value: String(k), text: sw.param }))}
                onChange={(v) => setXSweep(Number(v))}
              />
            ) : null}
            <label className="flex items-center gap-1">
              <input type="checkbox" checked={logX} onChange={(e) => setLogX(e.target.checked)} /> log {plot.xLabel}
            </label>
            <label className="flex items-center gap-1">
              <input
                type="checkbox"
                checked={logY}
                onChange={(e) => setLogChoice({ ...logChoice, [probe]: e.target.checked })}
              />{" "}
              log {series.probes[probe]}
            </label>
            {samples > 1 ? <span className="text-stone-500">mean over {samples} mismatch samples</span> : null}
            <BenchDataSelect bench={bench} onChoose={() => setProbeChoice(null)} />
          </div>
          <LinePlot
            title={`${series.probes[probe]} over ${plot.xLabel}`}
            x={plot.x}
            xAxis={xAxis}
            yAxis={yAxis}
            curves={plot.curves}
            marks={marks}
          />
          <BenchFigures bench={bench} shown={(s) => onPlot.includes(s)} />
        </div>
      ) : null}
      {series.probes.length > PROBE_COLUMNS ? (
        <p className="text-xs text-stone-500">
          {allProbes
            ? `all ${series.probes.length} probes as columns`
            : `${shownProbes.length} of ${series.probes.length} probes as columns (the first ${PROBE_COLUMNS} and the plotted one)`}{" "}
          <button
            type="button"
            onClick={() => setAllProbes(!allProbes)}
            className="text-moss-700 underline hover:text-moss-600"
          >
            {allProbes ? "show fewer" : `show all ${series.probes.length}`}
          </button>{" "}
          · every probe is in the CSV export
        </p>
      ) : null}
      <DataTable label="Probes by point" rows={rows} columns={columns} filterPlaceholder="Filter by point" />
    </div>
  );
}
