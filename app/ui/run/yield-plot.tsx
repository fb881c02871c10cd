"use client";

/** An expectation's Monte Carlo yield per grid point along the sweep, with its 95 % Wilson interval. */
import { useMemo } from "react";
import { formatEng } from "@/app/lib/format";
import { LinePlot } from "@/app/ui/plots/line-plot";
import { curvesAlong, type SweepAxis, yieldPerGrid } from "./expectation-curves";
import { paramUnit } from "./sweep-values";

export function YieldPlot({
  sweeps,
  gridYield,
  name,
}: {
  sweeps: SweepAxis[];
  gridYield: { passed: number[]; samples: number[] };
  name: string;
}) {
  const xSweep = sweeps.length - 1;
  const plot = useMemo(() => {
    const y = yieldPerGrid(gridYield);
    const pct = (a: (number | null)[]) => a.map((v) => (v === null ? null : 100 * v));
    const label = (p: string, v: number) => `${p} = ${formatEng(v, paramUnit(p), 3)}`;
    // (More than one sweep: the first MAX_CURVES combinations of the others, each with its interval.)
    const curves = [
      ...curvesAlong(sweeps, xSweep, pct(y.yield), "yield", label),
      ...curvesAlong(sweeps, xSweep, pct(y.low), "95 % interval, low", label),
      ...curvesAlong(sweeps, xSweep, pct(y.high), "95 % interval, high", label),
    ];
    return { x: sweeps[xSweep].values, curves };
  }, [sweeps, gridYield, xSweep]);
  return (
    <div data-slot="yield-plot">
      <LinePlot
        title={`Yield of ${name} per ${sweeps[xSweep].param}, with its 95 % Wilson interval`}
        x={plot.x}
        xLabel={sweeps[xSweep].param}
        xUnit={paramUnit(sweeps[xSweep].param)}
        logX={sweeps[xSweep].log}
        curves={plot.curves}
        yUnit="%"
        height={220}
      />
    </div>
  );
}
