"use client";

/**
 * The run page's live part: state and progress (polled while the run is live),
 * model and solver, validity, and the results — probe curves, tables of nodes,
 * devices and probes, spatial profiles, maps and mismatch spreads — with
 * exports. Every value comes from /api/runs/[id]… through SWR.
 */
import type { ColumnDef } from "@tanstack/react-table";
import Link from "next/link";
import { useMemo, useState } from "react";
import useSWR from "swr";
import { formatDuration, formatEng, formatNumber } from "@/app/lib/format";
import { indexedGroups } from "@/app/lib/indexed-names";
import { decodePoint, pointData, type PointData } from "@/app/lib/point-codec";
import type { RunLayout, SeriesView } from "@/app/lib/results";
import type { RunRow } from "@/app/lib/runs";
import { BenchDataSelect, BenchFigures, measuredMarks, siUnit, useBenchData, type BenchData } from "./bench-overlay";
import { DataTable } from "./data-table";
import { getBytes, getJson, sendJson } from "./fetch";
import { HeatMap, Histogram, LinePlot, type Curve } from "./plots";
import { ModelCaution, ProgressBar, RunStateBadge } from "./run-state";

const LIVE = new Set(["queued", "running"]);
/** Inversion coefficient limits of the regions (common practice: weak below 0.1, strong above 10). */
const WEAK_IC = 0.1;
const STRONG_IC = 10;

export interface RunViewProps {
  runId: string;
  canRun: boolean;
}

type Tab = "probes" | "operating" | "devices" | "profile" | "map" | "spread";

export function RunView({ runId, canRun }: RunViewProps) {
  const { data, error, mutate } = useSWR<{ run: RunRow }>(`/api/runs/${runId}`, getJson, {
    refreshInterval: (d) => (d && !LIVE.has(d.run.state) ? 0 : 1000),
  });
  const run = data?.run;
  const hasResults = !!run && run.pointsDone > 0;
  const series = useSWR<{ series: SeriesView }>(hasResults ? `/api/runs/${runId}/results?view=series` : null, getJson, {
    refreshInterval: run && LIVE.has(run.state) ? 2000 : 0,
  });
  const [cancelError, setCancelError] = useState<string | null>(null);
  if (error) return <p className="text-ember-500">Could not load the run: {(error as Error).message}</p>;
  if (!run) return <p className="text-stone-500">Loading the run…</p>;
  const live = LIVE.has(run.state);

  const cancel = async () => {
    setCancelError(null);
    try {
      await sendJson("POST", `/api/runs/${runId}/cancel`, {});
      await mutate();
    } catch (e) {
      setCancelError((e as Error).message);
    }
  };

  return (
    <div className="space-y-6">
      <ModelCaution />
      <section aria-label="Run state" className="space-y-2 rounded border border-stone-200 bg-white p-4">
        <div className="flex flex-wrap items-center gap-3">
          <RunStateBadge state={run.state} />
          <span className="text-sm text-stone-600">
            started by {run.createdByName} · {new Date(run.createdAt).toLocaleString("en-GB")}
            {run.startedAt && run.finishedAt ? ` · took ${formatDuration(run.finishedAt - run.startedAt)}` : ""}
          </span>
          {live && canRun ? (
            <button
              type="button"
              onClick={cancel}
              className="ml-auto rounded border border-ember-500 px-3 py-1 text-sm text-ember-500 hover:bg-ember-50"
            >
              Cancel run
            </button>
          ) : null}
        </div>
        <ProgressBar done={run.pointsDone} total={run.pointsTotal} />
        {run.reason ? (
          <p
            className={
              run.state === "failed" || run.state === "interrupted"
                ? "text-sm text-ember-500"
                : "text-sm text-stone-600"
            }
            data-slot="run-reason"
          >
            {run.reason}
          </p>
        ) : null}
        {cancelError ? <p className="text-sm text-ember-500">{cancelError}</p> : null}
      </section>
      <ModelPanel run={run} swept={series.data?.series.sweeps.map((x) => x.param) ?? []} />
      {hasResults ? (
        <>
          <ExportLinks runId={runId} />
          {series.data ? (
            <Results runId={runId} run={run} series={series.data.series} />
          ) : (
            <p className="text-stone-500">Loading results…</p>
          )}
        </>
      ) : !live ? (
        <p className="text-stone-600">This run stored no results.</p>
      ) : null}
    </div>
  );
}

function ModelPanel({ run, swept }: { run: RunRow; swept: string[] }) {
  const m = run.model as {
    model?: string;
    kappa?: number;
    temp?: number;
    ut?: number;
    i0?: number;
    vt0?: number | null;
    ispec?: number | null;
    devices?: number;
    nodes?: number;
  } | null;
  const method = run.newtonPoints
    ? "damped Newton"
    : run.solverReason
      ? "one sparse symmetric solve per point (pseudo-voltages)"
      : "—";
  return (
    <section
      aria-label="Model and solver"
      className="grid gap-4 rounded border border-stone-200 bg-white p-4 md:grid-cols-2"
    >
      <div className="space-y-1 text-sm">
        <h2 className="font-medium">Model</h2>
        {m ? (
          <dl className="tabular grid grid-cols-[10rem_1fr] gap-x-3 gap-y-0.5">
            <dt className="text-stone-500">device model</dt>
            <dd>{m.model === "ekv" ? "all-region EKV interpolation" : "weak-inversion exponential"}</dd>
            <dt className="text-stone-500">slope factor κ</dt>
            <dd>{formatNumber(m.kappa ?? NaN)}</dd>
            <dt className="text-stone-500">temperature</dt>
            <dd>
              {swept.includes("temp") ? "swept (see each point); otherwise " : ""}
              {formatNumber(m.temp ?? NaN)} K (U<sub>T</sub> = {formatEng(m.ut ?? NaN, "V")})
            </dd>
            <dt className="text-stone-500">I₀ (W/L = 1)</dt>
            <dd>{formatEng(m.i0 ?? NaN, "A")}</dd>
            <dt className="text-stone-500">
              V<sub>T0</sub>, I<sub>spec</sub>
            </dt>
            <dd>
              {m.vt0 == null ? "not set" : formatEng(m.vt0, "V")},{" "}
              {m.ispec == null ? "not set (no inversion coefficients)" : formatEng(m.ispec, "A")}
            </dd>
            <dt className="text-stone-500">size</dt>
            <dd>
              {m.nodes?.toLocaleString("en-US")} nodes, {m.devices?.toLocaleString("en-US")} devices
            </dd>
          </dl>
        ) : (
          <p className="text-stone-500">Known once the run starts.</p>
        )}
      </div>
      <div className="space-y-1 text-sm">
        <h2 className="font-medium">Solver and validity</h2>
        <p>
          <span className="text-stone-500">method:</span> <span data-slot="solver-method">{method}</span>
        </p>
        {run.solverReason ? (
          <p>
            <span className="text-stone-500">why:</span> {run.solverReason}
          </p>
        ) : null}
        {run.maxResidual !== null ? (
          <p className="tabular">
            <span className="text-stone-500">largest KCL residual:</span> {formatEng(run.maxResidual, "A")}
          </p>
        ) : null}
        <Validity run={run} />
      </div>
    </section>
  );
}

function Validity({ run }: { run: RunRow }) {
  if (run.devicesNotWeak === null) return null;
  const items: string[] = [];
  const ispec = (run.model as { ispec?: number | null } | null)?.ispec;
  if (ispec == null) items.push("Inversion coefficients are unknown (set ispec and vt0 to check weak inversion).");
  else if (run.devicesNotWeak > 0)
    items.push(
      `${run.devicesNotWeak.toLocaleString("en-US")} device(s) leave weak inversion (IC > ${WEAK_IC}) at some point: the exponential model does not hold there.`,
    );
  if (run.devicesNotSaturated! > 0)
    items.push(
      `${run.devicesNotSaturated!.toLocaleString("en-US")} device(s) are not saturated (V_DS ≤ 4 U_T) at some point.`,
    );
  if (run.newtonPoints)
    items.push("The network is outside the linear class: solved by damped Newton iteration, not exactly.");
  for (const w of run.warnings ?? [])
    items.push(`${w.message} (${w.points} point${w.points === 1 ? "" : "s"}, first at point ${w.firstPoint})`);
  for (const f of (run.failures ?? []).slice(0, 5)) items.push(`Not solved: ${f.message}`);
  if (items.length === 0)
    return <p className="text-moss-700">Every device stays in weak inversion and saturation at every point.</p>;
  return (
    <ul aria-label="Validity warnings" className="list-disc space-y-0.5 pl-5 text-amber-900">
      {items.map((t, i) => (
        <li key={i}>{t}</li>
      ))}
    </ul>
  );
}

function ExportLinks({ runId }: { runId: string }) {
  const link = "rounded border border-stone-300 bg-white px-2 py-1 hover:border-moss-500 hover:text-moss-700";
  return (
    <nav aria-label="Export" className="flex flex-wrap items-center gap-2 text-sm">
      <span className="text-stone-500">Export:</span>
      <a className={link} href={`/api/runs/${runId}/export?format=csv&table=probes`} download>
        Probes CSV
      </a>
      <a className={link} href={`/api/runs/${runId}/export?format=csv&table=nodes`} download>
        Nodes CSV
      </a>
      <a className={link} href={`/api/runs/${runId}/export?format=csv&table=devices`} download>
        Devices CSV
      </a>
      <a className={link} href={`/api/runs/${runId}/export?format=json`} download>
        JSON
      </a>
    </nav>
  );
}

/** Sweep values and unit of a param name (temp is in kelvin, params carry no unit we know). */
function paramUnit(name: string): string {
  return name === "temp" ? "K" : "";
}

function Results({ runId, run, series }: { runId: string; run: RunRow; series: SeriesView }) {
  const samples = series.mismatch?.runs ?? 1;
  const gridPoints = Math.max(1, Math.ceil(run.pointsTotal / samples));
  const [gridPoint, setGridPoint] = useState(0);
  const [sample, setSample] = useState(0);
  const point = Math.min(gridPoint * samples + sample, Math.max(0, series.point.length - 1));
  const [tab, setTab] = useState<Tab>(series.sweeps.length ? "probes" : "operating");
  const layout = useSWR<{ layout: RunLayout }>(`/api/runs/${runId}/results?view=layout`, getJson, {
    revalidateOnFocus: false,
  });
  const bytes = useSWR<ArrayBuffer>(`/api/runs/${runId}/results?view=point&point=${point}&format=binary`, getBytes, {
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
                .map((s) => `${s.param} = ${formatEng(current.params[s.param], paramUnit(s.param), 4)}`)
                .join(", ")}
              {samples > 1 ? ` · sample ${current.sample}` : ""}
            </span>
          ) : null}
        </div>
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
        {tab === "operating" ? current ? <OperatingPanel point={current} /> : <Loading /> : null}
        {tab === "devices" ? current ? <DevicesPanel point={current} /> : <Loading /> : null}
        {tab === "profile" ? current ? <ProfilePanel point={current} bench={bench} /> : <Loading /> : null}
        {tab === "map" ? current ? <MapPanel point={current} series={series} /> : <Loading /> : null}
        {tab === "spread" ? <SpreadPanel series={series} gridPoint={gridPoint} /> : null}
      </div>
      {current?.error ? <p className="text-sm text-ember-500">This point was not solved: {current.error}</p> : null}
      <p className="text-xs text-stone-500">
        Permalink: <Link href={`/runs/${runId}`}>/runs/{runId}</Link>
      </p>
    </section>
  );
}

function Loading() {
  return <p className="text-stone-500">Loading…</p>;
}

/** Mean over the samples of each grid point (the series has samples fastest). */
function meanOverSamples(values: (number | null)[], samples: number): (number | null)[] {
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

function ProbesPanel({ series, bench }: { series: SeriesView; bench: BenchData }) {
  // null: follow the probe the chosen bench data is matched to (else the first probe).
  const [probeChoice, setProbeChoice] = useState<number | null>(null);
  const matchedProbe = bench.overlay?.series.map((s) => series.probes.indexOf(s.against)).find((j) => j >= 0);
  const probe = probeChoice ?? matchedProbe ?? 0;
  const setProbe = setProbeChoice;
  const [logX, setLogX] = useState(series.sweeps[series.sweeps.length - 1]?.log ?? false);
  const [logY, setLogY] = useState(false);
  const samples = series.mismatch?.runs ?? 1;
  const [xSweep, setXSweep] = useState(series.sweeps.length - 1);
  const plot = useMemo(() => {
    if (series.sweeps.length === 0 || series.probes.length === 0) return null;
    const sweeps = series.sweeps;
    const xs = sweeps[xSweep];
    const values = meanOverSamples(series.probeValues[probe] ?? [], samples);
    // One curve per combination of the other sweeps' values (outer sweep slowest in the grid order).
    const curves = new Map<string, Curve>();
    for (let g = 0; g < values.length; g++) {
      let rest = g;
      const idx = new Array<number>(sweeps.length);
      for (let k = sweeps.length - 1; k >= 0; k--) {
        idx[k] = rest % sweeps[k].values.length;
        rest = Math.floor(rest / sweeps[k].values.length);
      }
      const others = sweeps
        .map((sw, k) => (k === xSweep ? null : `${sw.param} = ${formatEng(sw.values[idx[k]], paramUnit(sw.param), 3)}`))
        .filter((x): x is string => x !== null);
      const key = others.join(", ") || series.probes[probe];
      let c = curves.get(key);
      if (!c) {
        if (curves.size >= 12) continue;
        c = { label: key, values: new Array<number | null>(xs.values.length).fill(null) };
        curves.set(key, c);
      }
      c.values[idx[xSweep]] = values[g];
    }
    return { x: xs.values, xLabel: xs.param, xUnit: paramUnit(xs.param), curves: [...curves.values()] };
  }, [series, probe, samples, xSweep]);
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
            header: s.param,
            accessorFn: (r: Row) => r.params[j] ?? NaN,
            cell: (c: { getValue: () => unknown }) => formatEng(c.getValue() as number, paramUnit(s.param), 4),
          }) as ColumnDef<Row>,
      ),
      ...series.probes.map(
        (name, j) =>
          ({
            id: `probe-${name}`,
            header: name,
            accessorFn: (r: Row) => r.probes[j] ?? NaN,
            cell: (c: { getValue: () => unknown }) => formatEng(c.getValue() as number, "", 4),
          }) as ColumnDef<Row>,
      ),
      {
        id: "residual",
        header: "residual",
        accessorFn: (r) => r.residual ?? NaN,
        cell: (c) => formatEng(c.getValue<number>(), "A", 2),
      },
    ],
    [series],
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
              <label className="flex items-center gap-2">
                along
                <select
                  value={xSweep}
                  onChange={(e) => setXSweep(Number(e.target.value))}
                  className="rounded border border-stone-300 bg-white px-1 py-0.5"
                  aria-label="Sweep along the x axis"
                >
                  {series.sweeps.map((sw, k) => (
                    <option key={sw.param} value={k}>
                      {sw.param}
                    </option>
                  ))}
                </select>
              </label>
            ) : null}
            <label className="flex items-center gap-1">
              <input type="checkbox" checked={logX} onChange={(e) => setLogX(e.target.checked)} /> log {plot.xLabel}
            </label>
            <label className="flex items-center gap-1">
              <input type="checkbox" checked={logY} onChange={(e) => setLogY(e.target.checked)} /> log{" "}
              {series.probes[probe]}
            </label>
            {samples > 1 ? <span className="text-stone-500">mean over {samples} mismatch samples</span> : null}
            <BenchDataSelect bench={bench} onChoose={() => setProbeChoice(null)} />
          </div>
          <LinePlot
            title={`${series.probes[probe]} over ${plot.xLabel}`}
            x={plot.x}
            xLabel={plot.xLabel}
            xUnit={plot.xUnit}
            curves={plot.curves}
            logX={logX}
            logY={logY}
            marks={marks}
            yUnit={onPlot[0] ? siUnit(onPlot[0].unit) : undefined}
          />
          <BenchFigures bench={bench} shown={(s) => onPlot.includes(s)} />
        </div>
      ) : null}
      <DataTable label="Probes by point" rows={rows} columns={columns} filterPlaceholder="Filter by point" />
    </div>
  );
}

function OperatingPanel({ point }: { point: PointData }) {
  const nodes = useMemo(
    () => point.nodes.names.map((name, k) => ({ name, rail: point.nodes.isRail[k], voltage: point.nodes.voltage[k] })),
    [point],
  );
  const rails = useMemo(() => point.rails.names.map((name, k) => ({ name, current: point.rails.current[k] })), [point]);
  const probes = useMemo(() => point.probes.names.map((name, k) => ({ name, value: point.probes.value[k] })), [point]);
  const nodeCols = useMemo<ColumnDef<(typeof nodes)[number]>[]>(
    () => [
      { id: "name", header: "node", accessorKey: "name" },
      { id: "kind", header: "kind", accessorFn: (r) => (r.rail ? "rail" : "internal") },
      {
        id: "voltage",
        header: "voltage",
        accessorFn: (r) => r.voltage,
        cell: (c) => formatEng(c.getValue<number>(), "V", 4),
      },
    ],
    [],
  );
  const railCols = useMemo<ColumnDef<(typeof rails)[number]>[]>(
    () => [
      { id: "name", header: "rail", accessorKey: "name" },
      {
        id: "current",
        header: "current delivered",
        accessorFn: (r) => r.current,
        cell: (c) => formatEng(c.getValue<number>(), "A", 4),
      },
    ],
    [],
  );
  const probeCols = useMemo<ColumnDef<(typeof probes)[number]>[]>(
    () => [
      { id: "name", header: "probe", accessorKey: "name" },
      { id: "value", header: "value", accessorFn: (r) => r.value, cell: (c) => formatEng(c.getValue<number>(), "", 5) },
    ],
    [],
  );
  return (
    <div className="grid gap-6 lg:grid-cols-2">
      <div className="space-y-2">
        <h3 className="text-sm font-medium">Nodes</h3>
        <DataTable label="Nodes" rows={nodes} columns={nodeCols} filterPlaceholder="Filter nodes" />
      </div>
      <div className="space-y-6">
        <div className="space-y-2">
          <h3 className="text-sm font-medium">Rails</h3>
          <DataTable label="Rails" rows={rails} columns={railCols} filterPlaceholder="Filter rails" pageSize={10} />
        </div>
        {probes.length ? (
          <div className="space-y-2">
            <h3 className="text-sm font-medium">Probes</h3>
            <DataTable
              label="Probes"
              rows={probes}
              columns={probeCols}
              filterPlaceholder="Filter probes"
              pageSize={10}
            />
          </div>
        ) : null}
        <p className="tabular text-xs text-stone-500">
          solver: {point.solver.method}, {point.solver.iterations} iteration(s), residual{" "}
          {formatEng(point.solver.residual, "A", 2)}
        </p>
      </div>
    </div>
  );
}

function region(ic: number): string {
  if (Number.isNaN(ic)) return "—";
  if (ic < WEAK_IC) return "weak";
  if (ic <= STRONG_IC) return "moderate";
  return "strong";
}

function DevicesPanel({ point }: { point: PointData }) {
  const rows = useMemo(
    () =>
      point.devices.names.map((name, k) => ({
        name,
        type: point.devices.types[k] === "n" ? "nfet" : "pfet",
        current: point.devices.current[k],
        ic: point.devices.ic[k],
        saturated: point.devices.saturated[k] === 1,
      })),
    [point],
  );
  const [onlyFlagged, setOnlyFlagged] = useState(false);
  const shown = useMemo(
    () => (onlyFlagged ? rows.filter((r) => !r.saturated || r.ic > WEAK_IC) : rows),
    [rows, onlyFlagged],
  );
  const cols = useMemo<ColumnDef<(typeof rows)[number]>[]>(
    () => [
      { id: "name", header: "device", accessorKey: "name" },
      { id: "type", header: "type", accessorKey: "type" },
      {
        id: "current",
        header: "current",
        accessorFn: (r) => r.current,
        cell: (c) => formatEng(c.getValue<number>(), "A", 4),
      },
      {
        id: "ic",
        header: "inversion coeff.",
        accessorFn: (r) => r.ic,
        cell: (c) => formatNumber(c.getValue<number>(), 3),
      },
      { id: "region", header: "region", accessorFn: (r) => region(r.ic) },
      { id: "saturated", header: "saturated", accessorFn: (r) => (r.saturated ? "yes" : "no") },
    ],
    [],
  );
  return (
    <div className="space-y-2">
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={onlyFlagged} onChange={(e) => setOnlyFlagged(e.target.checked)} /> only devices
        outside weak inversion or not saturated
      </label>
      <DataTable
        label="Devices"
        rows={shown}
        columns={cols}
        filterPlaceholder="Filter devices"
        rowClass={(r) => (!r.saturated || r.ic > WEAK_IC ? "bg-amber-50" : "")}
      />
    </div>
  );
}

/** The probe stem of a profile overlay's `against` ("i{k}" → "i"), else null. */
function profileStem(against: string): string | null {
  return against.endsWith("{k}") ? against.slice(0, -3) : null;
}

function ProfilePanel({ point, bench }: { point: PointData; bench: BenchData }) {
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
    // Indexed probes (i0, i1, … as a for loop writes them): what a profile overlay compares bench data with. Their unit is not stored.
    const probes = indexedGroups(point.probes.names).profiles.map((p) => ({
      key: `probe:${p.stem}`,
      label: `probe ${p.stem}·`,
      unit: "",
      index: p.index,
      values: p.at.map((k) => point.probes.value[k]),
    }));
    return [...nodes, ...devs, ...probes];
  }, [point]);
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
  if (!g)
    return (
      <p className="text-stone-600">
        No indexed names here: a profile needs nodes or devices named with an index (x1, x2, … as a for loop makes
        them).
      </p>
    );
  const curves: Curve[] = [{ label: g.label, values: g.unit === "A" ? g.values.map((v) => Math.abs(v)) : g.values }];
  return (
    <div className="space-y-2">
      <div className="flex flex-wrap items-center gap-4 text-sm">
        <label className="flex items-center gap-2">
          profile of
          <select
            value={g.key}
            onChange={(e) => setKey(e.target.value)}
            className="rounded border border-stone-300 bg-white px-1 py-0.5"
            aria-label="Profile of"
          >
            {groups.map((x) => (
              <option key={x.key} value={x.key}>
                {x.label} ({x.index.length})
              </option>
            ))}
          </select>
        </label>
        <label className="flex items-center gap-1">
          <input type="checkbox" checked={log} onChange={(e) => setLog(e.target.checked)} /> log axis
        </label>
        {g.unit === "A" ? <span className="text-stone-500">magnitude of the current</span> : null}
        <BenchDataSelect bench={bench} onChoose={() => setKey(null)} />
      </div>
      <LinePlot
        title={`${g.label} along the index`}
        x={g.index}
        xLabel="index"
        curves={curves}
        yUnit={onPlot[0] ? siUnit(onPlot[0].unit) : g.unit}
        logY={log}
        marks={marks}
      />
      <BenchFigures bench={bench} shown={(s) => onPlot.includes(s)} />
    </div>
  );
}

function MapPanel({ point, series }: { point: PointData; series: SeriesView }) {
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

function SpreadPanel({ series, gridPoint }: { series: SeriesView; gridPoint: number }) {
  const [probe, setProbe] = useState(0);
  const samples = series.mismatch?.runs ?? 1;
  const values = useMemo(
    () =>
      (series.probeValues[probe] ?? [])
        .slice(gridPoint * samples, (gridPoint + 1) * samples)
        .filter((v): v is number => v !== null),
    [series, probe, gridPoint, samples],
  );
  const mean = values.reduce((a, b) => a + b, 0) / Math.max(1, values.length);
  const sd = Math.sqrt(values.reduce((a, b) => a + (b - mean) ** 2, 0) / Math.max(1, values.length - 1));
  if (series.probes.length === 0) return <p className="text-stone-600">This network has no probes to spread.</p>;
  return (
    <div className="space-y-2">
      <div className="flex flex-wrap items-center gap-4 text-sm">
        <ProbeSelect probes={series.probes} value={probe} onChange={setProbe} label="Probe to spread" />
        <span className="tabular text-stone-700">
          {values.length} samples · mean {formatEng(mean, "", 4)} · σ {formatEng(sd, "", 3)} · σ/mean{" "}
          {formatNumber(sd / Math.abs(mean), 3)}
        </span>
      </div>
      <Histogram title={`${series.probes[probe]} over mismatch samples`} values={values} />
    </div>
  );
}

/** "probe [select]": which of the run's probes a view shows. */
function ProbeSelect({
  probes,
  value,
  onChange,
  label,
}: {
  probes: string[];
  value: number;
  onChange(index: number): void;
  label: string;
}) {
  return (
    <label className="flex items-center gap-2">
      probe
      <select
        value={value}
        onChange={(e) => onChange(Number(e.target.value))}
        className="rounded border border-stone-300 bg-white px-1 py-0.5"
        aria-label={label}
      >
        {probes.map((p, i) => (
          <option key={p} value={i}>
            {p}
          </option>
        ))}
      </select>
    </label>
  );
}
