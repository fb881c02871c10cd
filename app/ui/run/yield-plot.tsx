"use client";

/** An expectation's Monte Carlo yield per grid point along the sweep, with its 95 % Wilson interval. */
import { useMemo } from "react";
import { formatValue } from "@/app/lib/format";
import type { SeriesView } from "@/app/lib/results";
import { LinePlot } from "@/app/ui/plots/line-plot";
import { paramUnit } from "./sweep-values";
import { curvesAlong, type SweepAxis, yieldPerGrid } from "./expectation-curves";

export function YieldPlot({
  sweeps,
  units,
  gridYield,
  name,
}: {
  sweeps: SweepAxis[];
  /** Where the swept params' units are read (the run's series). */
  units: Pick<SeriesView, "params" | "paramUnits">;
  gridYield: { passed: number[]; samples: number[] };
  name: string;
}) {
  const xSweep = sweeps.length - 1;
  const plot = useMemo(() => {
    const y = yieldPerGrid(gridYield);
    const pct = (a: (number | null)[]) => a.map((v) => (v === null ? null : 100 * v));
    const label = (p: string, v: number) => `${p} = ${formatValue(v, paramUnit(units, p), { digits: 3 })}`;
    // (More than one sweep: the first MAX_CURVES combinations of the others, each with its interval.)
    const curves = [
      ...curvesAlong(sweeps, xSweep, pct(y.yield), "yield", label),
      ...curvesAlong(sweeps, xSweep, pct(y.low), "95 % interval, low", label),
      ...curvesAlong(sweeps, xSweep, pct(y.high), "95 % interval, high", label),
    ];
    return { x: sweeps[xSweep].values, curves };
  }, [sweeps, gridYield, xSweep, units]);
  return (
    <div data-slot="yield-plot">
      <LinePlot
        title={`Yield of ${name} per ${sweeps[xSweep].param}, with its 95 % Wilson interval`}
        x={plot.x}
        xAxis={{ label: sweeps[xSweep].param, unit: paramUnit(units, sweeps[xSweep].param), log: sweeps[xSweep].log }}
        yAxis={{ label: "yield (%)", unit: null }}
        curves={plot.curves}
        height={220}
      />
    </div>
  );
}
