"use client";

/**
 * Bench data on the run page's own plots: a select of the network's
 * measurements (hidden when it has none); once one is chosen, its overlay
 * against this run (GET /api/measurements/[id]/overlay?run=RUN) gives the
 * measured points to draw on the matched curve and the agreement figures.
 * The route's refusal (a run that does not cover the measurement's x, …) is
 * shown as its one-line message in place of the figures.
 */
import { useMemo, useState } from "react";
import useSWR from "swr";
import { formatEng, formatNumber } from "@/app/lib/format";
import type { Overlay } from "@/app/lib/review/measurement-store";
import { getJson } from "./fetch";
import type { Marks } from "./plots";

/** Measured points are drawn in Runnel's ember (--color-ember-500 in app/globals.css), apart from the moss of the simulated curve. */
export const MEASURED_COLOUR = "#b4532a";

interface Listed {
  id: string;
  name: string;
  rows: number;
  xName: string;
  xUnit: string;
  series: { name: string; unit: string }[];
}

const NONE: Listed[] = [];

export type OverlaySeries = Overlay["series"][number];

export interface BenchData {
  measurements: Listed[];
  chosen: Listed | null;
  choose: (id: string) => void;
  overlay: Overlay | undefined;
  /** The overlay route's one-line refusal, when it refused. */
  error: string | null;
  loading: boolean;
}

/** The network's measurements and the chosen one's overlay on `runId`; state lives in the caller (shared by the views). */
export function useBenchData(networkId: string, runId: string): BenchData {
  const list = useSWR<{ measurements: Listed[] }>(`/api/networks/${networkId}/measurements`, getJson, {
    revalidateOnFocus: false,
  });
  const [chosenId, setChosenId] = useState("");
  const measurements = list.data?.measurements ?? NONE;
  const chosen = measurements.find((m) => m.id === chosenId) ?? null;
  const overlay = useSWR<Overlay>(chosen ? `/api/measurements/${chosen.id}/overlay?run=${runId}` : null, getJson, {
    shouldRetryOnError: false,
    revalidateOnFocus: false,
  });
  const data = chosen ? overlay.data : undefined;
  const error = chosen && overlay.error ? (overlay.error as Error).message : null;
  const loading = !!chosen && overlay.isLoading;
  // One object per change, so plots that depend on it are redrawn only when the bench data changes.
  return useMemo(
    () => ({ measurements, chosen, choose: setChosenId, overlay: data, error, loading }),
    [measurements, chosen, data, error, loading],
  );
}

/** Unit symbol of a CSV unit in SI ("nA" → "A", "1" → ""): the overlay's values are in SI units. */
export function siUnit(unit: string): string {
  if (unit === "1") return "";
  const base = unit.slice(-1);
  return base === "V" || base === "A" || base === "K" ? base : unit;
}

/** Legend label of a measured series: "measured: NAME", with the series when the file has several. */
export function measuredLabel(bench: BenchData, s: OverlaySeries): string {
  const name = bench.chosen?.name ?? "bench data";
  return (bench.overlay?.series.length ?? 0) > 1 ? `measured: ${name} (${s.name})` : `measured: ${name}`;
}

/** The measured points of `series` as points-only marks for LinePlot. */
export function measuredMarks(bench: BenchData, series: OverlaySeries[]): Marks[] {
  return series.map((s) => ({
    label: measuredLabel(bench, s),
    x: s.measured.x,
    y: s.measured.y,
    colour: MEASURED_COLOUR,
  }));
}

/** The select; renders nothing while the network has no measurements. `onChoose` runs after the choice (a view may follow the matched curve). */
export function BenchDataSelect({ bench, onChoose }: { bench: BenchData; onChoose?: () => void }) {
  if (bench.measurements.length === 0) return null;
  return (
    <label className="flex items-center gap-2">
      bench data
      <select
        value={bench.chosen?.id ?? ""}
        onChange={(e) => {
          bench.choose(e.target.value);
          onChoose?.();
        }}
        className="rounded border border-stone-300 bg-white px-1 py-0.5"
        aria-label="Bench data"
      >
        <option value="">none</option>
        {bench.measurements.map((m) => (
          <option key={m.id} value={m.id}>
            {m.name} · {m.rows} rows · {m.xName} [{m.xUnit}] vs {m.series.map((s) => s.name).join(", ")}
          </option>
        ))}
      </select>
    </label>
  );
}

/**
 * Agreement figures of the chosen measurement beside the plot: per series, RMS
 * of the log ratio and the largest absolute error (engineering notation), with
 * the caution; `shown` says which series are drawn on this plot. Nothing when
 * no measurement is chosen; the route's message when it refused.
 */
export function BenchFigures({ bench, shown }: { bench: BenchData; shown: (s: OverlaySeries) => boolean }) {
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
              <strong>{Number.isFinite(a.rmsLogRatio) ? formatNumber(a.rmsLogRatio, 3) : "—"}</strong>
              {Number.isFinite(a.rmsLogRatio)
                ? ` (about ${formatNumber((Math.exp(a.rmsLogRatio) - 1) * 100, 2)} % typical deviation)`
                : ""}
              ; largest absolute error <strong>{formatEng(a.maxAbsError, unit)}</strong>
              {Number.isFinite(a.maxAbsErrorAt) ? ` at ${xParam} = ${formatEng(a.maxAbsErrorAt, xUnit)}` : ""}; {a.n}{" "}
              points compared
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
