"use client";

/**
 * The Goal-seek view of a run: the results of the file's `seek` statements (the param's value giving the probe its
 * target, by Brent's method, one search per point of the other sweeps, or why a search failed), and for members
 * who may start runs a form to seek another param/probe/target on the same commit. From /api/runs/[id]/seek.
 */
import { useState } from "react";
import useSWR from "swr";
import type { SeriesView } from "@/app/lib/results";
import { useFormat } from "@/app/ui/notation";
import type { StoredSeek } from "@/app/lib/run-seeks";
import type { SeekView } from "@/app/lib/sensitivity-view";
import type { SeekJson } from "@/src/solver/design-json";
import { getJson, sendJson } from "@/app/ui/fetch";
import { LoadingNote } from "./loading-note";
import { paramUnit } from "./sweep-values";

/** Where a seek's units are read: the run's series (a seek's JSON names params and probes without units). */
export type SeekUnits = Pick<SeriesView, "params" | "paramUnits" | "probes" | "probeUnits">;

function SeekTable({ seek, units }: { seek: SeekJson; units: SeekUnits }) {
  const fmt = useFormat();
  const unit = paramUnit(units, seek.param);
  const probeUnit = units.probeUnits?.[units.probes.indexOf(seek.probe)] ?? null;
  return (
    <div className="space-y-1">
      <p className="font-medium text-stone-800">
        {seek.param} giving {seek.probe} = {fmt(seek.target, probeUnit)}: {seek.ok ? "found" : "not found everywhere"}
      </p>
      <div className="overflow-x-auto">
        <table className="text-left" aria-label={`Goal-seek of ${seek.param}`}>
          <thead className="text-xs text-stone-500">
            <tr>
              <th className="py-1 pr-3 font-normal">at</th>
              <th className="py-1 pr-3 font-normal">{seek.param}</th>
              <th className="py-1 pr-3 font-normal">{seek.probe} reached</th>
              <th className="py-1 pr-3 font-normal">iterations</th>
            </tr>
          </thead>
          <tbody className="tabular">
            {seek.points.map((p, k) => (
              <tr key={k} className="border-t border-stone-100">
                <td className="py-0.5 pr-3">
                  {Object.entries(p.at)
                    .map(([n, x]) => `${n} = ${fmt(x, paramUnit(units, n))}`)
                    .join(", ") || "the file's point"}
                </td>
                {p.ok ? (
                  <>
                    <td className="py-0.5 pr-3">{fmt(p.value, unit)}</td>
                    <td className="py-0.5 pr-3">{fmt(p.achieved, probeUnit)}</td>
                  </>
                ) : (
                  <td colSpan={2} className="py-0.5 pr-3 text-ember-500">
                    {p.message}
                  </td>
                )}
                <td className="py-0.5 pr-3">{p.iterations}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

function SeekResult({ view, units }: { view: SeekView; units: SeekUnits }) {
  if (!view.ok) return <p className="text-ember-500">{view.error}</p>;
  return (
    <>
      {view.seeks.map((s, k) => (
        <SeekTable key={k} seek={s} units={units} />
      ))}
    </>
  );
}

export function SeekPanel({ runId, canRun, units }: { runId: string; canRun: boolean; units: SeekUnits }) {
  const stated = useSWR<SeekView & { asked: StoredSeek[] }>(`/api/runs/${runId}/seek`, getJson, {
    revalidateOnFocus: false,
  });
  const [form, setForm] = useState({ param: "", low: "", high: "", probe: "", target: "" });
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  async function seek() {
    setBusy(true);
    setProblem(null);
    try {
      const num = (s: string) => Number(s.trim());
      const spec = { ...form, low: num(form.low), high: num(form.high), target: num(form.target) };
      if (![spec.low, spec.high, spec.target].every(Number.isFinite))
        throw new Error("low, high and target must be numbers in SI units (e.g. 0.65, 2e-9)");
      const answer = await sendJson<SeekView & { id: string }>("POST", `/api/runs/${runId}/seek`, spec);
      // Kept with the run: it heads the list every member sees.
      await stated.mutate(
        (d) =>
          d && {
            ...d,
            asked: [
              { id: answer.id, createdAt: Date.now(), createdByName: "you", spec, view: answer },
              ...d.asked.filter((a) => a.id !== answer.id),
            ],
          },
        { revalidate: false },
      );
    } catch (e) {
      setProblem((e as Error).message);
    } finally {
      setBusy(false);
    }
  }
  const field = (key: keyof typeof form, label: string, width = "w-24") => (
    <label className="flex items-center gap-1">
      <span className="text-stone-600">{label}</span>
      <input
        value={form[key]}
        onChange={(e) => setForm({ ...form, [key]: e.target.value })}
        aria-label={`Seek ${label}`}
        className={`${width} rounded border border-stone-300 px-1`}
      />
    </label>
  );
  return (
    <div className="space-y-4 text-sm" data-testid="goal-seek">
      <p className="text-stone-600">
        Brent&apos;s method on the run&apos;s network, one search per point of its other sweeps. Model estimates: a
        value found here is where the model crosses the target, not a trimmed silicon value.
      </p>
      {stated.error ? <p className="text-ember-500">{(stated.error as Error).message}</p> : null}
      {!stated.data && !stated.error ? <LoadingNote /> : null}
      {stated.data?.ok && stated.data.seeks.length === 0 ? (
        <p className="text-stone-500">The file states no `seek`.</p>
      ) : null}
      {stated.data ? <SeekResult view={stated.data} units={units} /> : null}
      {canRun ? (
        <form
          className="flex flex-wrap items-center gap-2 rounded border border-stone-200 bg-white p-3"
          onSubmit={(e) => {
            e.preventDefault();
            void seek();
          }}
        >
          <span className="font-medium text-stone-800">Seek</span>
          {field("param", "param")}
          {field("low", "from")}
          {field("high", "to")}
          {field("probe", "probe")}
          {field("target", "target")}
          <button
            type="submit"
            disabled={busy}
            className="rounded bg-moss-600 px-3 py-1 text-white hover:bg-moss-700 disabled:opacity-50"
          >
            {busy ? "Seeking…" : "Seek"}
          </button>
        </form>
      ) : null}
      {problem ? <p className="text-ember-500">{problem}</p> : null}
      {stated.data?.asked.length ? (
        <section aria-label="Seeks asked on this run" className="space-y-3">
          <h3 className="font-medium text-stone-800">Asked on this run</h3>
          {stated.data.asked.map((a) => (
            <div key={a.id} className="space-y-1 border-t border-stone-100 pt-2" data-seek={a.id}>
              <p className="text-xs text-stone-500">
                by {a.createdByName} · {new Date(a.createdAt).toLocaleString("en-GB")} · {a.spec.param} in [{a.spec.low}
                , {a.spec.high}]
              </p>
              <SeekResult view={a.view} units={units} />
            </div>
          ))}
        </section>
      ) : null}
    </div>
  );
}
