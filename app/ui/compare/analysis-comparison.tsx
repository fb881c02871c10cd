/**
 * One analysis matched between two commits (server component): which runs,
 * the per-probe summary (sortable), the overlay plots or distributions, and
 * nodes, devices and rails by kind with their paged tables.
 */
import type { Notation } from "@/app/lib/format";
import { HoverLink } from "@/app/ui/hover-link";
import type { AnalysisSummary } from "@/app/lib/review/compare-data";
import { EntityDrawer } from "./entity-table";
import { KIND_LABEL, KindSummaries } from "./kind-summaries";
import { ProbeOverlays } from "./probe-overlays";
import { ProbeSummaryTable } from "./probe-summary-table";

export interface AnalysisComparisonProps {
  summary: AnalysisSummary;
  /** from, to and the tolerance fields given. */
  query: Record<string, string>;
  labels: [string, string];
  notation?: Notation;
}

const short = (id: string) => id.slice(0, 10);
const mag = (v: number) => (Number.isNaN(v) ? -1 : Math.abs(v));

export function AnalysisComparison({ summary: a, query, labels, notation = "si" }: AnalysisComparisonProps) {
  const runLink = (id: string | null) =>
    id ? (
      <HoverLink href={`/runs/${id}`} className="font-mono text-moss-700 hover:underline">
        {short(id)}
      </HoverLink>
    ) : (
      <span className="text-stone-500">none</span>
    );
  const order = [...a.probes].sort((x, y) => mag(y.maxRel) - mag(x.maxRel)).map((p) => p.name);
  const shape =
    a.shape === "mismatch"
      ? `Monte Carlo, ${a.samples.toLocaleString("en-US")} samples${a.sweeps.length ? " per swept point" : ""}`
      : a.shape === "sweep"
        ? `${a.sweeps.map((s) => `${s.param} (${s.values.length.toLocaleString("en-US")} values)`).join(" × ")}`
        : "operating point";
  return (
    <article
      aria-label={`Analysis ${a.analysis}`}
      data-analysis={a.analysis}
      className="space-y-3 rounded border border-stone-300 bg-white p-3"
    >
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h3 className="font-semibold">{a.analysis}</h3>
        <span className="text-xs text-stone-600">{shape}</span>
        <span className="text-xs text-stone-600">
          runs {runLink(a.fromRunId)} → {runLink(a.toRunId)}
        </span>
        {a.matchedPoints ? (
          <span className="text-xs text-stone-600">
            {a.matchedPoints.toLocaleString("en-US")} points matched
            {a.addedPoints ? `, ${a.addedPoints.toLocaleString("en-US")} only after` : ""}
            {a.removedPoints ? `, ${a.removedPoints.toLocaleString("en-US")} only before` : ""}
          </span>
        ) : null}
      </header>
      {a.note ? <p className="text-sm text-stone-600">{a.note}.</p> : null}
      {a.probes.length ? <ProbeSummaryTable rows={a.probes} caption={`Probes of ${a.analysis}`} /> : null}
      {a.fromRunId && a.toRunId && a.matchedPoints + a.addedPoints > 0 ? (
        <ProbeOverlays from={query.from} to={query.to} analysis={a.analysis} order={order} labels={labels} />
      ) : null}
      <KindSummaries kinds={a.kinds} notation={notation} />
      {a.kinds
        .filter((k) => k.kind !== "probe")
        .map((k) => (
          <EntityDrawer
            key={`${k.kind}/${k.quantity}`}
            query={query}
            analysis={a.analysis}
            kind={k.kind}
            quantity={k.quantity}
            label={KIND_LABEL[`${k.kind}/${k.quantity}`]}
            total={k.entities}
            moved={k.moved}
          />
        ))}
    </article>
  );
}
