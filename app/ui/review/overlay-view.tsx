"use client";

/** A measurement against a run: per series, measured and simulated points on one plot, with the agreement figures. */
import { useMemo } from "react";
import type { Overlay } from "@/app/lib/review/measurement-store";
import { useFormat } from "@/app/ui/notation";
import { quantityLabel } from "@/app/ui/plots/axis";
import { LinePlot } from "@/app/ui/plots/line-plot";
import { siUnit } from "@/app/ui/run/bench-data";

export function OverlayView({ data }: { data: Overlay }) {
  return (
    <div className="space-y-3">
      {data.series.map((s) => (
        <OverlaySeriesView key={s.name} x={data.x} series={s} />
      ))}
    </div>
  );
}

function OverlaySeriesView({ x, series: s }: { x: Overlay["x"]; series: Overlay["series"][number] }) {
  const fmt = useFormat();
  const unit = siUnit(s.unit);
  const xUnit = siUnit(x.unit);
  const plot = useMemo(() => {
    const xs = [...new Set([...s.simulated.x, ...s.measured.x])].sort((a, b) => a - b);
    const at = (pts: { x: number[]; y: number[] }) => {
      const m = new Map(pts.x.map((v, i) => [v, pts.y[i]]));
      return xs.map((v) => m.get(v) ?? null);
    };
    return {
      x: xs,
      curves: [
        { label: `simulated ${s.against}`, values: at(s.simulated) },
        { label: `measured ${s.name}`, values: at(s.measured) },
      ],
      xAxis: { label: x.param, unit: xUnit || null },
      yAxis: { label: quantityLabel(s.name, unit || null), unit: unit || null, log: unit === "A" },
    };
  }, [s, x.param, xUnit, unit]);
  const a = s.agreement;
  return (
    <figure className="space-y-1 rounded border border-stone-300 bg-white p-2">
      <LinePlot
        title={`${s.name}: measured and simulated (${s.against})`}
        x={plot.x}
        xAxis={plot.xAxis}
        yAxis={plot.yAxis}
        curves={plot.curves}
        points
        height={240}
      />
      <figcaption className="text-sm" data-testid={`agreement-${s.name}`}>
        RMS of the log ratio <strong className="tabular">{fmt(a.rmsLogRatio, "")}</strong>
        {Number.isFinite(a.rmsLogRatio)
          ? ` (about ${fmt((Math.exp(a.rmsLogRatio) - 1) * 100, "", 2)} % typical deviation)`
          : ""}
        ; largest absolute error <strong className="tabular">{fmt(a.maxAbsError, unit)}</strong> at {x.param} ={" "}
        {fmt(a.maxAbsErrorAt, xUnit)}; {a.n} points compared
        {a.outside ? `, ${a.outside} outside the simulated range` : ""}
        {a.signMismatch ? `, ${a.signMismatch} with opposite signs` : ""}. Simulation is a model estimate; the bench
        decides.
      </figcaption>
    </figure>
  );
}
