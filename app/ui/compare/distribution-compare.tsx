"use client";

/**
 * Monte Carlo runs compared as distributions, per probe: mean, σ and quantiles
 * before and after, the two histograms on shared bins, and the two-sample
 * Kolmogorov–Smirnov test (N. Smirnov, Ann. Math. Stat. 19, 1948) with its p-value.
 */
import { useNotation } from "@/app/ui/notation";
import type { ProbeDistribution } from "@/app/lib/review/compare-data";
import { QUANTILE_LEVELS } from "@/app/lib/review/stats";
import { HistogramOverlay } from "./histogram-overlay";
import { formatChange, formatWithUnit } from "./value-format";

const LEVEL = 0.05;

function ksVerdict(d: ProbeDistribution): string {
  if (!d.ks) return "Not tested: a side has no finite samples.";
  const p = d.ks.pValue;
  const pText = p < 1e-4 ? p.toExponential(1) : p.toPrecision(2);
  const head = `Two-sample Kolmogorov–Smirnov (Smirnov 1948): D = ${d.ks.statistic.toPrecision(3)}, p = ${pText} (${d.ks.method}, ${d.ks.n} and ${d.ks.m} samples)`;
  return p < LEVEL
    ? `${head}. The two distributions differ at the ${LEVEL * 100} % level.`
    : `${head}. No evidence at the ${LEVEL * 100} % level that the distributions differ.`;
}

export function DistributionCompare({ d, labels }: { d: ProbeDistribution; labels: [string, string] }) {
  const { notation } = useNotation();
  const rows: [string, number, number][] = [
    ["mean", d.from.mean, d.to.mean],
    ["σ", d.from.sd, d.to.sd],
    ...QUANTILE_LEVELS.map((q, i): [string, number, number] => [
      `${q * 100} % quantile`,
      d.from.quantiles[i],
      d.to.quantiles[i],
    ]),
  ];
  return (
    <div className="grid gap-3 lg:grid-cols-[minmax(0,22rem)_1fr]" data-distribution={d.name}>
      <div className="space-y-2">
        <div className="overflow-x-auto">
          <table className="w-full text-xs" aria-label={`Distribution of ${d.name}`}>
            <thead className="border-b border-stone-300 text-left text-stone-600">
              <tr>
                <th className="px-2 py-1 font-medium">{d.name}</th>
                <th className="px-2 py-1 text-right font-medium">{labels[0]}</th>
                <th className="px-2 py-1 text-right font-medium">{labels[1]}</th>
                <th className="px-2 py-1 text-right font-medium">change</th>
              </tr>
            </thead>
            <tbody className="tabular font-mono">
              {rows.map(([label, a, b]) => (
                <tr key={label} className="border-b border-stone-100">
                  <th scope="row" className="px-2 py-0.5 text-left font-sans font-normal">
                    {label}
                  </th>
                  <td className="px-2 py-0.5 text-right">{formatWithUnit(a, d.unit, 4, notation)}</td>
                  <td className="px-2 py-0.5 text-right">{formatWithUnit(b, d.unit, 4, notation)}</td>
                  <td className="px-2 py-0.5 text-right">{formatChange(b - a, d.unit, notation)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <p className="text-xs text-stone-600" data-testid="ks-test">
          {ksVerdict(d)}
        </p>
        {d.from.dropped || d.to.dropped ? (
          <p className="text-xs text-ochre-700">
            {d.from.dropped + d.to.dropped} samples without a finite value (failed points) were left out.
          </p>
        ) : null}
      </div>
      <HistogramOverlay
        title={`${d.name}: samples before and after`}
        edges={d.histogram.edges}
        before={d.histogram.from}
        after={d.histogram.to}
        unit={d.unit}
        labels={labels}
      />
    </div>
  );
}
