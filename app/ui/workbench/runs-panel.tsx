"use client";

import { HoverLink } from "@/app/ui/hover-link";
import { useMemo } from "react";
import type { RunRow } from "@/app/lib/runs";
import { sendJson } from "@/app/ui/fetch";
import { ProgressBar } from "@/app/ui/run/progress-bar";
import { RunStateBadge } from "@/app/ui/run/run-state-badge";
import { isLive } from "@/db/run-states";

/** The runs of the selected commit with their state and progress. */

export function RunsPanel({
  runs,
  commitId,
  onCanceled,
  canRun,
}: {
  runs: RunRow[] | undefined;
  commitId: string | null;
  onCanceled(): void;
  canRun: boolean;
}) {
  const list = useMemo(() => runs ?? [], [runs]);
  return (
    <section aria-labelledby="runs-heading" className="space-y-2">
      <h2 id="runs-heading" className="text-sm font-semibold">
        Runs{commitId ? <span className="font-normal text-stone-500"> of {commitId.slice(0, 8)}</span> : null}
      </h2>
      {list.length === 0 ? (
        <p className="text-sm text-stone-500">No runs of this commit yet.</p>
      ) : (
        <ul aria-label="Runs" className="divide-y divide-stone-100 rounded border border-stone-200 bg-white">
          {list.map((r) => (
            <li key={r.id} className="space-y-1 px-3 py-2 text-sm">
              <div className="flex items-center justify-between gap-2">
                <HoverLink href={`/runs/${r.id}`} className="font-mono text-xs text-moss-700 hover:underline">
                  {r.id}
                </HoverLink>
                <RunStateBadge state={r.state} />
              </div>
              {isLive(r.state) ? (
                <div className="flex items-center gap-2">
                  <div className="flex-1">
                    <ProgressBar done={r.pointsDone} total={r.pointsTotal} label={`Progress of run ${r.id}`} />
                  </div>
                  {canRun ? (
                    <button
                      type="button"
                      className="text-xs text-ember-500 hover:underline"
                      onClick={() => void sendJson("POST", `/api/runs/${r.id}/cancel`, {}).then(onCanceled, onCanceled)}
                    >
                      Cancel
                    </button>
                  ) : null}
                </div>
              ) : (
                <p className="text-xs text-stone-500">
                  {r.pointsDone.toLocaleString("en-US")} point{r.pointsDone === 1 ? "" : "s"} · {r.createdByName}
                  {r.reason ? ` · ${r.reason}` : ""}
                </p>
              )}
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
