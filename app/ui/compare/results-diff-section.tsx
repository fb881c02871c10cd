/** The compare page's results: per matched analysis, what moved (summaries, overlays, tables by kind). */
import { formatValue, type Notation } from "@/app/lib/format";
import type { AnalysisSummary } from "@/app/lib/review/compare-data";
import type { Comparison } from "@/app/lib/review/diffs";
import { AddedRemoved } from "./added-removed";
import { AnalysisComparison } from "./analysis-comparison";
import { CompareSection } from "./compare-section";

export interface ResultsDiffSectionProps {
  comparison: Comparison;
  analyses: AnalysisSummary[];
  query: Record<string, string>;
  /** The reader's notation (its cookie, read by the page) for the values written on the server. */
  notation?: Notation;
}

export function ResultsDiffSection({ comparison, analyses, query, notation = "si" }: ResultsDiffSectionProps) {
  const results = comparison.results;
  const labels: [string, string] = [
    `before ${comparison.from.id.slice(0, 7)}`,
    `after ${comparison.to.id.slice(0, 7)}`,
  ];
  return (
    <CompareSection id="results-diff" title="Results" className="space-y-3">
      <p className="text-sm" data-testid="moved-summary">
        <strong>{results.beyond.toLocaleString("en-US")}</strong> of {results.compared.toLocaleString("en-US")} values
        moved beyond tolerance (relative {results.tolerance.rel}, currents{" "}
        {formatValue(results.tolerance.absCurrent, "A", { notation })}, voltages{" "}
        {formatValue(results.tolerance.absVoltage, "V", { notation })}).
      </p>
      <AddedRemoved results={results} />
      {analyses.length === 0 ? <p className="text-sm text-stone-600">Neither commit has a finished run.</p> : null}
      {analyses.map((a) => (
        <AnalysisComparison key={a.analysis} summary={a} query={query} labels={labels} notation={notation} />
      ))}
      <p role="note" className="text-xs text-stone-500">
        Results are model estimates: silicon must be verified by measurement, and a foundry&apos;s models and design
        rules take precedence.
      </p>
    </CompareSection>
  );
}
