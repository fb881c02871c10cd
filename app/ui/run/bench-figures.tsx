import { useFormat } from "@/app/ui/notation";
import { siUnit, type BenchData, type OverlaySeries } from "./bench-data";

/**
 * Agreement figures of the chosen measurement beside the plot: per series, RMS
 * of the log ratio and the largest absolute error (engineering notation), with
 * the caution; `shown` says which series are drawn on this plot. Nothing when
 * no measurement is chosen; the route's message when it refused.
 */
export function BenchFigures({ bench, shown }: { bench: BenchData; shown: (s: OverlaySeries) => boolean }) {
  const fmt = useFormat();
  if (!bench.chosen) return null;
  if (bench.error)
    return (
      <p className="text-sm text-amber-800" data-testid="bench-refusal">
        {bench.error}
      </p>
    );
  if (!bench.overlay)
    return bench.loading ? <p className="text-sm text-stone-500">Comparing with the bench data…</p> : null;
  const xUnit = siUnit(bench.overlay.x.unit);
  const xParam = bench.overlay.x.param;
  return (
    <aside
      aria-label="Agreement with the bench data"
      className="space-y-1 rounded border border-stone-200 bg-white p-2 text-sm"
    >
      <ul className="space-y-1">
        {bench.overlay.series.map((s) => {
          const a = s.agreement;
          const unit = siUnit(s.unit);
          return (
            <li key={s.name} data-testid={`bench-agreement-${s.name}`} className="tabular">
              <span className="font-medium">{s.name}</span> against {s.against}: RMS of the log ratio{" "}
              <strong>{fmt(a.rmsLogRatio, "")}</strong>
              {Number.isFinite(a.rmsLogRatio)
                ? ` (about ${fmt((Math.exp(a.rmsLogRatio) - 1) * 100, "", 2)} % typical deviation)`
                : ""}
              ; largest absolute error <strong>{fmt(a.maxAbsError, unit)}</strong>
              {Number.isFinite(a.maxAbsErrorAt) ? ` at ${xParam} = ${fmt(a.maxAbsErrorAt, xUnit)}` : ""}; {a.n} points
              compared
              {a.outside ? `, ${a.outside} outside the simulated range` : ""}
              {a.signMismatch ? `, ${a.signMismatch} with opposite signs` : ""}
              {shown(s) ? "" : ` (not on this plot: choose ${s.against} to see it)`}.
            </li>
          );
        })}
      </ul>
      <p role="note" className="text-xs text-amber-900">
        Bench data and the model differ: where they disagree, the measurement takes precedence over the simulation.
      </p>
    </aside>
  );
}
