"use client";

/**
 * Mismatch spread of one probe: at the chosen sweep point its samples' mean,
 * σ, 5 % and 95 % quantiles and histogram (σ/mean only where the mean is
 * clearly non-zero); along the last sweep, μ with a μ ± σ band and the 5 % /
 * 95 % quantiles at every point.
 */
import { useMemo, useState } from "react";
import type { SeriesView } from "@/app/lib/results";
import { useFormat } from "@/app/ui/notation";
import { Histogram } from "@/app/ui/plots/histogram";
import { LinePlot } from "@/app/ui/plots/line-plot";
import type { Band, Curve } from "@/app/ui/plots/plot-types";
import { ProbeSelect } from "./probe-select";
import { spreadStats } from "./spread-stats";
import { mostVaryingProbe, probeAxis, probeUnit, sweepAxis } from "./sweep-values";

const BANDS: Band[] = [{ upper: 1, lower: 2 }];

export function SpreadPanel({ series, gridPoint }: { series: SeriesView; gridPoint: number }) {
  const fmt = useFormat();
  const [choice, setProbe] = useState<number | null>(null);
  const probe = choice ?? mostVaryingProbe(series.probeValues);
  const samples = series.mismatch?.runs ?? 1;
  const unit = probeUnit(series, probe);
  const values = useMemo(
    () =>
      (series.probeValues[probe] ?? [])
        .slice(gridPoint * samples, (gridPoint + 1) * samples)
        .filter((v): v is number => v !== null),
    [series, probe, gridPoint, samples],
  );
  const stats = useMemo(() => spreadStats(values), [values]);
  const axis = useMemo(() => probeAxis(series, probe, false), [series, probe]);
  const markers = useMemo(
    () =>
      Number.isFinite(stats.mean)
        ? [
            { label: "5 %", x: stats.q05 },
            { label: "μ", x: stats.mean },
            { label: "95 %", x: stats.q95 },
          ]
        : [],
    [stats],
  );
  // Along the last sweep, the other sweeps held at the chosen point's values.
  const along = useMemo(() => {
    const sweeps = series.sweeps;
    if (sweeps.length === 0) return null;
    const last = sweeps[sweeps.length - 1];
    const n = last.values.length;
    const base = gridPoint - (gridPoint % n);
    const col = series.probeValues[probe] ?? [];
    const mean: (number | null)[] = [];
    const up: (number | null)[] = [];
    const lo: (number | null)[] = [];
    const q05: (number | null)[] = [];
    const q95: (number | null)[] = [];
    for (let i = 0; i < n; i++) {
      const g = base + i;
      const s = spreadStats(col.slice(g * samples, (g + 1) * samples));
      const ok = s.n > 0;
      mean.push(ok ? s.mean : null);
      up.push(ok ? s.mean + s.sd : null);
      lo.push(ok ? s.mean - s.sd : null);
      q05.push(ok ? s.q05 : null);
      q95.push(ok ? s.q95 : null);
    }
    const curves: Curve[] = [
      { label: "μ", values: mean, colour: 0 },
      { label: "μ + σ", values: up, colour: 0, dash: true },
      { label: "μ − σ", values: lo, colour: 0, dash: true },
      { label: "5 %", values: q05, colour: 1, dash: true },
      { label: "95 %", values: q95, colour: 1, dash: true },
    ];
    return { x: last.values, curves, xAxis: sweepAxis(series, sweeps.length - 1, last.log) };
  }, [series, probe, gridPoint, samples]);
  if (series.probes.length === 0) return <p className="text-stone-600">This network has no probes to spread.</p>;
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center gap-4 text-sm">
        <ProbeSelect probes={series.probes} value={probe} onChange={setProbe} label="Probe to spread" />
        <span className="tabular text-stone-700" data-slot="spread-stats">
          {stats.n} samples · μ {fmt(stats.mean, unit)} · σ {fmt(stats.sd, unit)} · 5 % {fmt(stats.q05, unit)} · 95 %{" "}
          {fmt(stats.q95, unit)} · σ/|μ|{" "}
          {stats.relative === null ? (
            <span title="the mean is within three standard errors of zero: a relative spread means nothing here">
              — (mean ≈ 0)
            </span>
          ) : (
            fmt(stats.relative, "")
          )}
        </span>
      </div>
      <Histogram
        title={`${series.probes[probe]} over ${stats.n} mismatch samples`}
        values={values}
        axis={axis}
        markers={markers}
      />
      {along && along.x.length > 1 ? (
        <LinePlot
          title={`${series.probes[probe]} along ${along.xAxis.label}: μ ± σ and 5 % / 95 % quantiles`}
          x={along.x}
          xAxis={along.xAxis}
          yAxis={axis}
          curves={along.curves}
          bands={BANDS}
        />
      ) : null}
    </div>
  );
}
