/** The compare page's results section: runs compared, how many values moved, what was added or removed, the rows. */
import { formatEng } from "@/app/lib/format";
import type { Comparison } from "@/app/lib/review/diffs";
import { AddedRemoved } from "./added-removed";
import { ComparedRuns } from "./compared-runs";
import { ResultsTable } from "./results-table";

export function ResultsDiffSection({ comparison }: { comparison: Comparison }) {
  const results = comparison.results;
  return (
    <section aria-labelledby="results-diff" className="space-y-2">
      <h2 id="results-diff" className="text-lg font-semibold">
        Results
      </h2>
      <ComparedRuns runs={comparison.runs} />
      <p className="text-sm" data-testid="moved-summary">
        <strong>{results.beyond.toLocaleString("en-US")}</strong> of {results.compared.toLocaleString("en-US")} values
        moved beyond tolerance (relative {results.tolerance.rel}, currents{" "}
        {formatEng(results.tolerance.absCurrent, "A")}, voltages {formatEng(results.tolerance.absVoltage, "V")}).
        {results.truncated ? " Only the first 2000 rows are listed." : ""}
      </p>
      <AddedRemoved results={results} />
      {results.rows.length ? <ResultsTable rows={results.rows} /> : null}
      <p role="note" className="text-xs text-stone-500">
        Results are model estimates: silicon must be verified by measurement, and a foundry&apos;s models and design
        rules take precedence.
      </p>
    </section>
  );
}
