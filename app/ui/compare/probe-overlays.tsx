"use client";

/**
 * Overlay plots of one analysis (GET /api/compare/series): per probe, the
 * older and the newer run along the outer sweep, the relative change plotted
 * beneath; for a grid, the values of the inner sweeps are chosen above the
 * plots. Monte Carlo analyses show the distributions instead. Currents and
 * positive values spanning more than two decades get a log axis.
 */
import { useNotation } from "@/app/ui/notation";
import { useMemo, useState } from "react";
import useSWR from "swr";
import type { SeriesAnswer, SideSeries } from "@/app/lib/review/compare-data";
import { getJson } from "@/app/ui/fetch";
import { LinePlot } from "@/app/ui/plots/line-plot";
import { quantityLabel } from "@/app/ui/plots/axis";
import type { Curve, Marks } from "@/app/ui/plots/plot-types";
import { DistributionCompare } from "./distribution-compare";
import { formatWithUnit } from "./value-format";

export interface ProbeOverlaysProps {
  from: string;
  to: string;
  analysis: string;
  /** Probe names, most moved first; the first few are drawn until the reader picks others. */
  order: string[];
  labels: [string, string];
}

const SHOWN = 4;

/** Value of `probe` on a side at grid indices `idx` (outer first), null when that point was not stored. */
function valueAt(s: SideSeries, probe: number, idx: number[], sample = 0): number | null {
  let k = 0;
  for (let i = 0; i < s.sweeps.length; i++) k = k * s.sweeps[i].values.length + (idx[i] ?? 0);
  const point = k * s.samples + sample;
  const at = pointIndex(s).get(point);
  return at === undefined ? null : s.probes[probe].values[at];
}

const indexCache = new WeakMap<SideSeries, Map<number, number>>();
function pointIndex(s: SideSeries): Map<number, number> {
  let m = indexCache.get(s);
  if (!m) indexCache.set(s, (m = new Map(s.points.map((p, i) => [p, i]))));
  return m;
}

function wantsLog(values: (number | null)[], unit: string | null): boolean {
  const v = values.filter((x): x is number => x !== null && Number.isFinite(x));
  if (v.length === 0 || v.some((x) => x <= 0)) return false;
  const max = Math.max(...v);
  const min = Math.min(...v);
  return unit === "A" || max / min >= 100;
}

export function ProbeOverlays({ from, to, analysis, order, labels }: ProbeOverlaysProps) {
  const [grid, setGrid] = useState(0);
  const [picked, setPicked] = useState<string[]>(() => order.slice(0, SHOWN));
  // only the curves drawn are fetched: every probe of a 1,000-point sweep of a 64-tap row is megabytes
  const key = `/api/compare/series?${new URLSearchParams({ from, to, analysis, grid: String(grid), probes: [...picked].sort().join(",") })}`;
  const { data, error } = useSWR<SeriesAnswer>(key, getJson, { keepPreviousData: true });
  const [inner, setInner] = useState<number[]>([]);
  if (error)
    return (
      <p role="alert" className="text-xs text-ember-500">
        {(error as Error).message}
      </p>
    );
  if (!data) return <p className="text-xs text-stone-500">Loading the curves…</p>;
  const names = data.names;
  if (names.length === 0) return <p className="text-xs text-stone-500">This network has no probes to plot.</p>;
  return (
    <div className="space-y-3" data-testid="overlays">
      <fieldset className="flex flex-wrap items-center gap-x-3 gap-y-1 text-xs">
        <legend className="sr-only">Probes to plot</legend>
        <span className="text-stone-600">plot:</span>
        {names.map((n) => (
          <label key={n} className="flex items-center gap-1 font-mono">
            <input
              type="checkbox"
              checked={picked.includes(n)}
              onChange={(e) => setPicked((p) => (e.target.checked ? [...p, n] : p.filter((x) => x !== n)))}
            />
            {n}
          </label>
        ))}
      </fieldset>
      {data.shape === "mismatch" ? (
        <MismatchView data={data} grid={grid} setGrid={setGrid} picked={picked} labels={labels} />
      ) : (
        <SweepView data={data} picked={picked} inner={inner} setInner={setInner} labels={labels} />
      )}
    </div>
  );
}

function GridPicker({
  sweeps,
  value,
  onChange,
  skipOuter,
}: {
  sweeps: SideSeries["sweeps"];
  value: number[];
  onChange(v: number[]): void;
  skipOuter: boolean;
}) {
  const { notation } = useNotation();
  const shown = sweeps.map((s, i) => ({ s, i })).filter(({ i }) => !skipOuter || i > 0);
  if (shown.length === 0) return null;
  return (
    <div className="flex flex-wrap gap-3 text-xs">
      {shown.map(({ s, i }) => (
        <label key={s.param} className="flex items-center gap-1">
          <span className="font-mono">{s.param}</span> =
          <select
            aria-label={`Value of ${s.param}`}
            value={value[i] ?? 0}
            onChange={(e) => {
              const next = [...value];
              next[i] = Number(e.target.value);
              onChange(next);
            }}
            className="rounded border border-stone-300 px-1 py-0.5 font-mono"
          >
            {s.values.map((v, k) => (
              <option key={k} value={k}>
                {formatWithUnit(v, s.unit, 4, notation)}
              </option>
            ))}
          </select>
        </label>
      ))}
    </div>
  );
}

function SweepView({
  data,
  picked,
  inner,
  setInner,
  labels,
}: {
  data: SeriesAnswer;
  picked: string[];
  inner: number[];
  setInner(v: number[]): void;
  labels: [string, string];
}) {
  const { from, to } = data;
  const outer = to.sweeps[0];
  const plots = useMemo(() => {
    if (!outer) return [];
    const sameAxis =
      from.sweeps[0]?.values.length === outer.values.length &&
      from.sweeps[0].values.every((v, i) => v === outer.values[i]);
    return to.probes
      .map((probe, j) => ({ probe, j }))
      .filter(({ probe }) => picked.includes(probe.name))
      .map(({ probe, j }) => {
        const fj = from.probes.findIndex((p) => p.name === probe.name);
        const idx = (i: number) => [i, ...to.sweeps.slice(1).map((_, k) => inner[k + 1] ?? 0)];
        const after = outer.values.map((_, i) => valueAt(to, j, idx(i)));
        const beforeOwn =
          fj < 0 || !from.sweeps[0]
            ? []
            : from.sweeps[0].values.map((_, i) =>
                valueAt(from, fj, [i, ...from.sweeps.slice(1).map((_, k) => inner[k + 1] ?? 0)]),
              );
        const curves: Curve[] = sameAxis
          ? [
              { label: labels[0], values: beforeOwn },
              { label: labels[1], values: after },
            ]
          : [{ label: labels[1], values: after }];
        const marks: Marks[] =
          sameAxis || fj < 0
            ? []
            : [
                {
                  label: labels[0],
                  x: from.sweeps[0].values.filter((_, i) => beforeOwn[i] !== null),
                  y: beforeOwn.filter((v): v is number => v !== null),
                  colour: "curve-1",
                },
              ];
        const relAt = outer.values.map((_, i) => {
          let k = 0;
          const g = idx(i);
          for (let s = 0; s < to.sweeps.length; s++) k = k * to.sweeps[s].values.length + g[s];
          const at = pointIndex(to).get(k);
          const r = at === undefined ? null : data.relative[j][at];
          return r === null ? null : r * 100;
        });
        return {
          name: probe.name,
          unit: probe.unit,
          curves,
          marks,
          rel: [{ label: "relative change (%)", values: relAt }],
          logY: wantsLog([...after, ...beforeOwn], probe.unit),
        };
      });
  }, [from, to, outer, picked, inner, labels, data.relative]);
  if (!outer) {
    // An operating point: nothing to sweep along; the summary table says it all.
    return <p className="text-xs text-stone-500">A single operating point: the table above has every change.</p>;
  }
  const logX = outer.values.every((v) => v > 0) && Math.max(...outer.values) / Math.min(...outer.values) >= 100;
  return (
    <div className="space-y-4">
      <GridPicker sweeps={to.sweeps} value={inner} onChange={setInner} skipOuter />
      <div className="grid gap-4 xl:grid-cols-2">
        {plots.map((p) => (
          <figure key={p.name} data-overlay={p.name} className="rounded border border-stone-200 bg-white p-2">
            <LinePlot
              title={`${p.name}${p.unit ? ` (${p.unit})` : ""} along ${outer.param}`}
              x={outer.values}
              xAxis={{ label: outer.param, unit: outer.unit ?? null, log: logX }}
              yAxis={{ label: quantityLabel(p.name, p.unit ?? null), unit: p.unit ?? null, log: p.logY }}
              curves={p.curves}
              marks={p.marks}
              height={220}
            />
            <LinePlot
              title={`relative change of ${p.name}`}
              x={outer.values}
              xAxis={{ label: outer.param, unit: outer.unit ?? null, log: logX }}
              yAxis={{ label: "relative change (%)", unit: null }}
              curves={p.rel}
              height={120}
            />
          </figure>
        ))}
      </div>
    </div>
  );
}

function MismatchView({
  data,
  grid,
  setGrid,
  picked,
  labels,
}: {
  data: SeriesAnswer;
  grid: number;
  setGrid(g: number): void;
  picked: string[];
  labels: [string, string];
}) {
  const sweeps = data.to.sweeps;
  const idx: number[] = [];
  let rest = grid;
  for (let s = sweeps.length - 1; s >= 0; s--) {
    idx[s] = rest % sweeps[s].values.length;
    rest = Math.floor(rest / sweeps[s].values.length);
  }
  return (
    <div className="space-y-4">
      <GridPicker
        sweeps={sweeps}
        value={idx}
        skipOuter={false}
        onChange={(v) => setGrid(v.reduce((k, x, s) => k * sweeps[s].values.length + x, 0))}
      />
      {(data.distributions ?? [])
        .filter((d) => picked.includes(d.name))
        .map((d) => (
          <DistributionCompare key={d.name} d={d} labels={labels} />
        ))}
    </div>
  );
}
