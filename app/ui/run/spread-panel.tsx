"use client";

/** Mismatch spread of one probe at one sweep point: its samples' mean, σ and histogram. */
import { useMemo, useState } from "react";
import { formatEng, formatNumber } from "@/app/lib/format";
import type { SeriesView } from "@/app/lib/results";
import { Histogram } from "@/app/ui/plots/histogram";
import { ProbeSelect } from "./probe-select";

export function SpreadPanel({ series, gridPoint }: { series: SeriesView; gridPoint: number }) {
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
