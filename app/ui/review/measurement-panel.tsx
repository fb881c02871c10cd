"use client";

/**
 * Bench measurements of a network: upload a CSV (refused with row and column
 * when anything is wrong; nothing stored), list them, and overlay one on a
 * run's curve with the error between measurement and simulation.
 */
import { useState } from "react";
import useSWR from "swr";
import type { Overlay } from "@/app/lib/review/measurement-store";
import { ApiError, getJson, sendForm } from "@/app/ui/fetch";
import { OverlayView } from "./overlay-view";
import { RunOptions, type RunChoice } from "./run-options";

interface Listed {
  id: string;
  name: string;
  xName: string;
  xUnit: string;
  series: { name: string; unit: string }[];
  rows: number;
  commitId: string | null;
  authorName: string;
}

export function MeasurementPanel({
  networkId,
  runs,
  commits,
  canWrite,
}: {
  networkId: string;
  runs: RunChoice[];
  commits: { id: string; label: string }[];
  canWrite: boolean;
}) {
  const list = useSWR<{ measurements: Listed[] }>(`/api/networks/${networkId}/measurements`, getJson);
  const [errors, setErrors] = useState<string[]>([]);
  const [busy, setBusy] = useState(false);
  const [chosen, setChosen] = useState<string>("");
  const [runId, setRunId] = useState<string>(runs[0]?.id ?? "");
  const measurementId = chosen || list.data?.measurements[0]?.id || "";
  const overlay = useSWR<Overlay>(
    measurementId && runId ? `/api/measurements/${measurementId}/overlay?run=${runId}` : null,
    getJson,
    { shouldRetryOnError: false },
  );

  async function upload(form: HTMLFormElement) {
    setBusy(true);
    setErrors([]);
    try {
      const body = await sendForm<{ measurement: { id: string } }>(
        `/api/networks/${networkId}/measurements`,
        new FormData(form),
      );
      form.reset();
      setChosen(body.measurement.id);
      await list.mutate();
    } catch (e) {
      const listed = e instanceof ApiError ? (e.body.errors as { text: string }[] | undefined) : undefined;
      setErrors(listed?.map((x) => x.text) ?? [(e as Error).message]);
    } finally {
      setBusy(false);
    }
  }

  return (
    <section aria-labelledby="measurements-heading" className="space-y-3">
      <h2 id="measurements-heading" className="text-lg font-semibold">
        Measurements
      </h2>
      {canWrite ? (
        <form
          className="flex flex-wrap items-end gap-3 rounded border border-stone-300 bg-white p-3 text-sm"
          onSubmit={(e) => {
            e.preventDefault();
            void upload(e.currentTarget);
          }}
        >
          <label className="flex flex-col">
            <span className="text-xs text-stone-500">bench CSV (UTF-8, at most 10 MB)</span>
            <input type="file" name="file" accept=".csv,text/csv,text/plain" required aria-label="Measurement CSV" />
          </label>
          {commits.length ? (
            <label className="flex flex-col">
              <span className="text-xs text-stone-500">measured revision</span>
              <select name="commitId" className="rounded border border-stone-300 px-2 py-1 font-mono" defaultValue="">
                <option value="">not named</option>
                {commits.map((c) => (
                  <option key={c.id} value={c.id}>
                    {c.label}
                  </option>
                ))}
              </select>
            </label>
          ) : null}
          <button
            type="submit"
            disabled={busy}
            className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700 disabled:opacity-50"
          >
            Upload
          </button>
          <p className="basis-full text-xs text-stone-500">
            First line: <code className="font-mono">x [unit], series [unit], …</code> e.g.{" "}
            <code className="font-mono">iin [nA], ratio [1]</code>; units V, A, K with a prefix (f p n u m k M G) or 1.
            Lines starting with # are notes.
          </p>
        </form>
      ) : null}
      {errors.length ? (
        <div role="alert" className="rounded border border-ember-500 bg-ember-50 p-2 text-sm text-ember-500">
          <p className="font-medium">The file was not stored:</p>
          <ul className="list-disc pl-5">
            {errors.map((e, i) => (
              <li key={i}>{e}</li>
            ))}
          </ul>
        </div>
      ) : null}
      {list.data && list.data.measurements.length === 0 ? (
        <p className="text-sm text-stone-500">No measurements yet.</p>
      ) : null}
      {list.data?.measurements.length ? (
        <div className="flex flex-wrap items-center gap-3 text-sm">
          <select
            aria-label="Measurement"
            value={measurementId}
            onChange={(e) => setChosen(e.target.value)}
            className="rounded border border-stone-300 px-2 py-1"
          >
            {list.data.measurements.map((m) => (
              <option key={m.id} value={m.id}>
                {m.name} · {m.rows} rows · {m.xName} [{m.xUnit}] vs {m.series.map((s) => s.name).join(", ")}
              </option>
            ))}
          </select>
          {runs.length ? (
            <select
              aria-label="Run to overlay"
              value={runId}
              onChange={(e) => setRunId(e.target.value)}
              className="rounded border border-stone-300 px-2 py-1 font-mono"
            >
              <RunOptions runs={runs} />
            </select>
          ) : (
            <span className="text-stone-500">no finished run to compare with</span>
          )}
        </div>
      ) : null}
      {overlay.error ? <p className="text-sm text-amber-800">{(overlay.error as Error).message}</p> : null}
      {overlay.data ? <OverlayView data={overlay.data} /> : null}
    </section>
  );
}
