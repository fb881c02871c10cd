"use client";

/** An expectation's margin along the sweep (the worst over each grid point's mismatch samples), with its bound at 0. */
import { useMemo, useState } from "react";
import { formatValue } from "@/app/lib/format";
import type { SeriesView } from "@/app/lib/results";
import { LinePlot } from "@/app/ui/plots/line-plot";
import { curvesAlong, worstPerGrid } from "./expectation-curves";
import { quantityOf } from "@/app/ui/plots/axis";
import { paramUnit } from "./sweep-values";

export function MarginPlot({ series, expectation, unit }: { series: SeriesView; expectation: number; unit: string }) {
  const [xSweep, setXSweep] = useState(series.sweeps.length - 1);
  const samples = series.mismatch?.runs ?? 1;
  const plot = useMemo(() => {
    const sweeps = series.sweeps;
    const xs = sweeps[xSweep];
    const perGrid = worstPerGrid(series.margins[expectation] ?? [], samples);
    const name = samples > 1 ? "worst margin over the samples" : "margin";
    const curves = curvesAlong(
      sweeps,
      xSweep,
      perGrid,
      name,
      (p, v) => `${p} = ${formatValue(v, paramUnit(series, p), { digits: 3 })}`,
    );
    curves.push({ label: "bound (margin 0)", values: xs.values.map(() => 0) });
    return { x: xs.values, xLabel: xs.param, xUnit: paramUnit(series, xs.param), log: xs.log, curves };
  }, [series, expectation, samples, xSweep]);
  const name = series.expectations[expectation]?.name ?? "";
  return (
    <div className="space-y-1" data-slot="margin-plot">
      {series.sweeps.length > 1 ? (
        <label className="flex items-center gap-2 text-sm">
          <span className="text-stone-600">along</span>
          <select
            value={xSweep}
            onChange={(e) => setXSweep(Number(e.target.value))}
            className="rounded border border-stone-300 px-1"
            aria-label="Sweep along the x axis"
          >
            {series.sweeps.map((s, k) => (
              <option key={s.param} value={k}>
                {s.param}
              </option>
            ))}
          </select>
        </label>
      ) : null}
      <LinePlot
        title={`Margin of ${name} along ${plot.xLabel}`}
        x={plot.x}
        xAxis={{ label: plot.xLabel, unit: plot.xUnit, log: plot.log }}
        yAxis={{ label: `${quantityOf(unit) ? `${quantityOf(unit)} ` : ""}margin`, unit }}
        curves={plot.curves}
        height={240}
      />
    </div>
  );
}
