"use client";

/**
 * The run page's live part: state and progress (polled while the run is live),
 * the network's expectations first, model and solver, validity, and the results — probe curves, tables of nodes,
 * devices and probes, spatial profiles, maps and mismatch spreads — with
 * exports. Every value comes from /api/runs/[id]… through SWR.
 */
import { useEffect, useState } from "react";
import useSWR, { preload } from "swr";
import { formatDuration } from "@/app/lib/format";
import type { SeriesView } from "@/app/lib/results";
import type { RunRow } from "@/app/lib/runs";
import { getBytes, getJson, sendJson } from "@/app/ui/fetch";
import type { ExpectationSummary } from "@/src/solver/expectation-summary";
import { LocalTime } from "@/app/ui/local-time";
import { ExpectationsPanel } from "./expectations-panel";
import type { FirstLook } from "./first-look";
import { FirstLookFigure } from "./first-look-figure";
import { ExportLinks } from "./export-links";
import { ModelCaution } from "./model-caution";
import { ModelPanel } from "./model-panel";
import { ProgressBar } from "./progress-bar";
import { layoutKey, pointKey, seriesKey } from "./result-keys";
import { Results } from "./results";
import { RunStateBadge } from "./run-state-badge";
import { isLive } from "@/db/run-states";

/** What GET /api/runs/[id] answers. */
export interface RunState {
  run: RunRow;
  expectations: ExpectationSummary[] | null;
}

export interface RunViewProps {
  runId: string;
  canRun: boolean;
  /** The run as the server rendered the page: the page is drawn from it, and its results asked for, at once. */
  initial: RunState;
  /** The first plot drawn on the server (first-look.ts), shown until the view it stands for can draw. */
  firstLook?: FirstLook | null;
}

export function RunView({ runId, canRun, initial, firstLook }: RunViewProps) {
  const { data, error, mutate } = useSWR<RunState>(`/api/runs/${runId}`, getJson, {
    fallbackData: initial,
    refreshInterval: (d) => (d && !isLive(d.run.state) ? 0 : 1000),
  });
  const run = data?.run;
  // Before the run's own answer arrives, the page's word decides: the series, the layout and the first point go
  // out together with it (on a first visit they used to wait for it, then for the series).
  const hasResults = (run ?? initial.run).pointsDone > 0;
  useEffect(() => {
    if (!hasResults) return;
    void preload(layoutKey(runId), getJson);
    void preload(pointKey(runId, 0), getBytes);
  }, [hasResults, runId]);
  const series = useSWR<{ series: SeriesView }>(hasResults ? seriesKey(runId) : null, getJson, {
    refreshInterval: run && isLive(run.state) ? 2000 : 0,
  });
  const [cancelError, setCancelError] = useState<string | null>(null);
  if (error) return <p className="text-ember-500">Could not load the run: {(error as Error).message}</p>;
  if (!run) return <p className="text-stone-500">Loading the run…</p>;
  const live = isLive(run.state);

  const cancel = async () => {
    setCancelError(null);
    try {
      await sendJson("POST", `/api/runs/${runId}/cancel`, {});
      await mutate();
    } catch (e) {
      setCancelError((e as Error).message);
    }
  };

  return (
    <div className="space-y-6">
      <ModelCaution />
      <section aria-label="Run state" className="space-y-2 rounded border border-stone-200 bg-white p-4">
        <div className="flex flex-wrap items-center gap-3">
          <RunStateBadge state={run.state} />
          <span className="text-sm text-stone-600">
            started by {run.createdByName} · <LocalTime ms={run.createdAt} />
            {run.startedAt && run.finishedAt ? ` · took ${formatDuration(run.finishedAt - run.startedAt)}` : ""}
          </span>
          {live && canRun ? (
            <button
              type="button"
              onClick={cancel}
              className="ml-auto rounded border border-ember-500 px-3 py-1 text-sm text-ember-500 hover:bg-ember-50"
            >
              Cancel run
            </button>
          ) : null}
        </div>
        <ProgressBar done={run.pointsDone} total={run.pointsTotal} />
        {run.reason ? (
          <p
            className={
              run.state === "failed" || run.state === "interrupted"
                ? "text-sm text-ember-500"
                : "text-sm text-stone-600"
            }
            data-slot="run-reason"
          >
            {run.reason}
          </p>
        ) : null}
        {cancelError ? <p className="text-sm text-ember-500">{cancelError}</p> : null}
      </section>
      {series.data ? <ExpectationsPanel run={run} series={series.data.series} summaries={data.expectations} /> : null}
      <ModelPanel run={run} swept={series.data?.series.sweeps.map((x) => x.param) ?? []} />
      {hasResults ? (
        <>
          <ExportLinks runId={runId} />
          {series.data ? (
            <Results runId={runId} run={run} series={series.data.series} canRun={canRun} firstLook={firstLook} />
          ) : firstLook ? (
            <FirstLookFigure look={firstLook} />
          ) : (
            <p className="text-stone-500">Loading results…</p>
          )}
        </>
      ) : !live ? (
        <p className="text-stone-600">This run stored no results.</p>
      ) : null}
    </div>
  );
}
