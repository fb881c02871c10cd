"use client";

/**
 * The run's expectations, first on the run page: each with whether it holds, the points passing, its margin
 * (how far the worst point is from the bound, in the bound's unit), where it first fails, and with mismatch its
 * yield with the 95 % Wilson interval. The chosen expectation's margin is drawn along the sweep, and with
 * mismatch its yield per grid point. While the run is live the verdicts so far are counted from the series.
 */
import { useMemo, useState } from "react";
import { formatEng, formatNumber, formatValue } from "@/app/lib/format";
import type { LayoutExpectation, SeriesView } from "@/app/lib/results";
import type { RunRow } from "@/app/lib/runs";
import type { ExpectationSummary } from "@/src/solver/expectation-summary";
import { ExpectationStatus } from "@/app/ui/expectation-status";
import { MarginPlot } from "./margin-plot";
import { YieldPlot } from "./yield-plot";
import { sweptAt } from "./expectation-curves";
import { paramUnit } from "./sweep-values";

/** What an expect statement says, in words. */
export function describeExpectation(x: LayoutExpectation): string {
  if (!x.check) return `condition (line ${x.line})`;
  const what = {
    saturated: "every device saturated",
    unsaturated: "every device unsaturated, by design",
    weak: "every device in weak inversion",
    reverse: "no forward-biased junction",
  }[x.check.kind];
  return `${what}: devices=${x.check.pattern} (line ${x.line})`;
}

/** A margin in its unit (engineering notation), or as a plain number for a ratio or a bare number. */
export function formatMargin(v: number, unit: string | null): string {
  return unit ? formatEng(v, unit, 3) : formatNumber(v, 3);
}

function percent(v: number): string {
  return `${(100 * v).toFixed(v > 0.999 && v < 1 ? 2 : 1)} %`;
}

export function ExpectationsPanel({
  run,
  series,
  summaries,
}: {
  run: RunRow;
  series: SeriesView;
  summaries: ExpectationSummary[] | null;
}) {
  const defs = series.expectations;
  const samples = series.mismatch?.runs ?? 1;
  // Live (or a run that stored no summaries): the verdicts of the points stored so far.
  const live = useMemo(
    () =>
      defs.map((d, j) => {
        const passed = series.passed[j] ?? [];
        let ok = 0;
        let first: number | null = null;
        passed.forEach((v, k) => {
          if (v === 1) ok++;
          else if (first === null) first = series.point[k];
        });
        return { name: d.name, points: passed.length, pointsPassed: ok, first };
      }),
    [defs, series],
  );
  const firstFailing = summaries
    ? summaries.findIndex((s) => !s.passed)
    : live.findIndex((l) => l.pointsPassed < l.points);
  const [chosen, setChosen] = useState<number | null>(null);
  const pick = chosen ?? Math.max(0, firstFailing);
  if (defs.length === 0)
    return (
      <section
        aria-label="Expectations"
        className="rounded border border-stone-200 bg-white p-4 text-sm text-stone-600"
      >
        <h2 className="mb-1 font-medium text-stone-900">Expectations</h2>
        This network states no expectations. Write what must hold as expect statements (for example{" "}
        <code className="font-mono">expect outputs = saturated devices=out*</code> or{" "}
        <code className="font-mono">expect budget = power() &lt;= 100n</code>), and every run says whether it does.
      </section>
    );
  const failing = summaries ? summaries.filter((s) => !s.passed).length : null;
  const where = (point: number, sample: number | null) => {
    const at = sweptAt(series.sweeps, samples, point);
    const swept = series.sweeps.map((s) => `${s.param} = ${formatValue(at[s.param], paramUnit(series, s.param))}`);
    return [`point ${point}`, ...swept, ...(sample !== null && samples > 1 ? [`sample ${sample}`] : [])].join(", ");
  };
  const def = defs[pick];
  const summary = summaries?.[pick] ?? null;
  return (
    <section aria-label="Expectations" className="space-y-3 rounded border border-stone-200 bg-white p-4">
      <div className="flex flex-wrap items-center gap-3">
        <h2 className="font-medium">Expectations</h2>
        {summaries ? <ExpectationStatus failing={failing} count={defs.length} /> : null}
        <span className="text-sm text-stone-600">
          {summaries
            ? `checked at every point${samples > 1 ? " and mismatch sample" : ""} (${run.pointsDone.toLocaleString("en-US")} of ${run.pointsTotal.toLocaleString("en-US")} points${run.state === "done" ? "" : `; the run ended ${run.state}`})`
            : "so far, over the points stored (the run is not over)"}
        </span>
      </div>
      <div className="overflow-x-auto">
        <table className="w-full text-sm" data-slot="expectations">
          <thead className="text-left text-stone-500">
            <tr>
              <th className="py-1 pr-3 font-normal">expectation</th>
              <th className="py-1 pr-3 font-normal">status</th>
              <th className="py-1 pr-3 font-normal">points passing</th>
              <th className="py-1 pr-3 font-normal">margin</th>
              <th className="py-1 pr-3 font-normal">where it fails first</th>
              {samples > 1 ? <th className="py-1 pr-3 font-normal">yield (95 % interval)</th> : null}
            </tr>
          </thead>
          <tbody>
            {defs.map((d, j) => {
              const s = summaries?.[j] ?? null;
              const l = live[j];
              const passedNow = s ? s.passed : l.pointsPassed === l.points;
              return (
                <tr
                  key={d.name}
                  data-expectation={d.name}
                  data-passed={passedNow ? "true" : "false"}
                  className={`border-t border-stone-100 ${j === pick ? "bg-stone-50" : ""}`}
                >
                  <td className="py-1 pr-3">
                    <button
                      type="button"
                      onClick={() => setChosen(j)}
                      aria-pressed={j === pick}
                      className="font-mono text-moss-700 hover:underline"
                      title={describeExpectation(d)}
                    >
                      {d.name}
                    </button>
                  </td>
                  <td className="py-1 pr-3">
                    {passedNow ? (
                      <span className="rounded bg-moss-600 px-1.5 py-0.5 text-xs font-medium text-white">holds</span>
                    ) : (
                      <span className="rounded border border-ember-500 bg-ember-50 px-1.5 py-0.5 text-xs font-medium text-ember-500">
                        fails
                      </span>
                    )}
                  </td>
                  <td className="tabular py-1 pr-3">
                    {(s ? s.pointsPassed : l.pointsPassed).toLocaleString("en-US")} /{" "}
                    {(s ? s.points : l.points).toLocaleString("en-US")}
                    {s && s.notSolved ? ` (${s.notSolved} not solved)` : ""}
                  </td>
                  <td className={`tabular py-1 pr-3 ${s && s.margin !== null && s.margin < 0 ? "text-ember-500" : ""}`}>
                    {s ? (s.margin === null ? "—" : formatMargin(s.margin, s.unit)) : "…"}
                  </td>
                  <td className="py-1 pr-3 text-stone-700">
                    {s
                      ? s.firstFailure
                        ? where(s.firstFailure.point, s.firstFailure.sample)
                        : "—"
                      : l.first !== null
                        ? where(l.first, samples > 1 ? l.first % samples : null)
                        : "—"}
                  </td>
                  {samples > 1 ? (
                    <td className="tabular py-1 pr-3">
                      {s?.yield
                        ? `${percent(s.yield.passed / s.yield.samples)} (${percent(s.yield.low)}–${percent(s.yield.high)})`
                        : "…"}
                    </td>
                  ) : null}
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {def ? (
        <div className="space-y-2" data-slot="expectation-detail">
          <p className="text-sm text-stone-700">
            <span className="font-mono">{def.name}</span>: {describeExpectation(def)}.{" "}
            {summary && summary.margin !== null
              ? `The worst point is ${formatMargin(summary.margin, summary.unit)} from its bound${summary.worstPoint !== null ? ` (${where(summary.worstPoint, samples > 1 ? summary.worstPoint % samples : null)})` : ""}.`
              : summary && def.unit === null && !def.check
                ? "Its comparisons mix units, so it has a verdict but no single margin."
                : ""}
          </p>
          {series.sweeps.length > 0 ? (
            <MarginPlot series={series} expectation={pick} unit={summary?.unit ?? def.unit ?? ""} />
          ) : null}
          {summary?.gridYield && series.sweeps.length > 0 ? (
            <YieldPlot sweeps={series.sweeps} units={series} gridYield={summary.gridYield} name={def.name} />
          ) : null}
          {summary?.yield && series.sweeps.length === 0 ? (
            <p className="text-sm text-stone-700" data-slot="yield">
              Yield {summary.yield.passed.toLocaleString("en-US")} of {summary.yield.samples.toLocaleString("en-US")}{" "}
              samples = {percent(summary.yield.passed / summary.yield.samples)}, 95 % Wilson interval{" "}
              {percent(summary.yield.low)} to {percent(summary.yield.high)}.
            </p>
          ) : null}
          {summary?.yield ? (
            <p className="text-xs text-stone-500">
              The interval is the Wilson score interval for the share of passing samples ({formatNumber(samples)} per
              grid point); it covers sampling error only. The mismatch model and its A_VT come from your process: a
              foundry&apos;s matching data takes precedence.
            </p>
          ) : null}
        </div>
      ) : null}
    </section>
  );
}
