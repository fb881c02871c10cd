"use client";

/**
 * The Sensitivity view of a run: per probe, the devices whose threshold moves it most (∂Q/∂VT per mV, as bars,
 * largest first) and its normalised size sensitivity ∂ln Q/∂ln(W/L), the derivative per param, and the first-order
 * mismatch budget (σ and each device's or group's share of σ²) with the Monte Carlo σ beside it when the file has
 * `mismatch`. At the file's own point (every param at its value), from GET /api/runs/[id]/sensitivity.
 */
import { useState } from "react";
import useSWR from "swr";
import { useFormat } from "@/app/ui/notation";
import type { SensitivityView } from "@/app/lib/sensitivity-view";
import { getJson } from "@/app/ui/fetch";
import { LoadingNote } from "./loading-note";

const pct = (x: number) => `${(100 * x).toFixed(1)} %`;

export function SensitivityPanel({ runId }: { runId: string }) {
  const fmt = useFormat();
  // Sensitivities are in the probe's unit per mV or per unit of a param: plain numbers by the one rule.
  const eng = (x: number | null) => fmt(x, null);
  const view = useSWR<SensitivityView>(`/api/runs/${runId}/sensitivity`, getJson, { revalidateOnFocus: false });
  const [chosen, setChosen] = useState<string | null>(null);
  if (view.error) return <p className="text-sm text-ember-500">Could not compute: {(view.error as Error).message}</p>;
  if (!view.data) return <LoadingNote />;
  const v = view.data;
  if (!v.ok) return <p className="text-sm text-ember-500">No sensitivities: {v.error}</p>;
  if (v.probes.length === 0)
    return <p className="text-sm text-stone-600">The network has no probes to differentiate.</p>;
  const p = v.probes.find((x) => x.probe === chosen) ?? v.probes[0];
  const largest = Math.max(...p.devices.map((d) => Math.abs(d.vt_per_mv)), 0) || 1;
  const params = Object.entries(p.params);
  return (
    <div className="space-y-4 text-sm" data-testid="sensitivity">
      <p className="text-stone-600">
        At the file&apos;s own point (every param at its value), by one adjoint solve per probe ({v.method}). Model
        estimates: a foundry&apos;s mismatch data and measurement take precedence.
      </p>
      <div className="flex flex-wrap items-center gap-3">
        <label className="flex items-center gap-2">
          <span className="text-stone-600">probe</span>
          <select
            value={p.probe}
            onChange={(e) => setChosen(e.target.value)}
            aria-label="Probe"
            className="max-w-56 rounded border border-stone-300 px-1"
          >
            {v.probes.map((x) => (
              <option key={x.probe}>{x.probe}</option>
            ))}
          </select>
        </label>
        <span className="tabular text-stone-700">value {eng(p.value)}</span>
        <a className="text-moss-700 hover:underline" href={`/api/runs/${runId}/sensitivity?format=csv`} download>
          CSV
        </a>
        <a className="text-moss-700 hover:underline" href={`/api/runs/${runId}/sensitivity`} download>
          JSON
        </a>
        {v.probesLeftOut > 0 ? <span className="text-stone-500">({v.probesLeftOut} more probes left out)</span> : null}
      </div>
      <div className="overflow-x-auto">
        <table className="w-full max-w-3xl text-left" aria-label="Devices by threshold sensitivity">
          <thead className="text-xs text-stone-500">
            <tr>
              <th className="py-1 pr-3 font-normal">device</th>
              <th className="py-1 pr-3 font-normal">∂Q/∂VT per mV</th>
              <th className="w-1/3 py-1 pr-3 font-normal" aria-hidden />
              <th className="py-1 pr-3 font-normal">∂ln Q/∂ln(W/L)</th>
            </tr>
          </thead>
          <tbody className="tabular">
            {p.devices.map((d) => (
              <tr key={d.device} className="border-t border-stone-100">
                <td className="py-0.5 pr-3 font-mono">{d.device}</td>
                <td className="py-0.5 pr-3">{eng(d.vt_per_mv)}</td>
                <td className="py-0.5 pr-3">
                  <div
                    className={`h-2.5 rounded-sm ${d.vt_per_mv < 0 ? "bg-ember-500/70" : "bg-moss-600/70"}`}
                    style={{ width: `${(100 * Math.abs(d.vt_per_mv)) / largest}%` }}
                    title={d.vt_per_mv < 0 ? "raising this threshold lowers the probe" : "raising it raises the probe"}
                  />
                </td>
                <td className="py-0.5 pr-3">{eng(d.size)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {params.length ? (
        <p className="tabular text-stone-700" data-slot="param-sensitivities">
          per param: {params.map(([k, x]) => `∂Q/∂${k} = ${eng(x)}`).join(" · ")}
        </p>
      ) : null}
      {p.budget ? (
        <div className="space-y-2" data-slot="budget">
          <h3 className="font-medium text-stone-800">Mismatch budget (first order, Pelgrom σ = avt/√(WL))</h3>
          <p className="tabular">
            σ ≈ {eng(p.budget.sigma)} (avt {Number((p.budget.avt * 1e3).toPrecision(3))} mV·µm)
            {p.budget.monte_carlo
              ? ` · Monte Carlo σ ${eng(p.budget.monte_carlo.sigma)} ± ${eng(p.budget.monte_carlo.standard_error)} over ${p.budget.monte_carlo.samples} samples`
              : ""}
          </p>
          <div className="overflow-x-auto">
            <table className="max-w-xl text-left" aria-label="Share of the variance">
              <thead className="text-xs text-stone-500">
                <tr>
                  <th className="py-1 pr-3 font-normal">device or group</th>
                  <th className="py-1 pr-3 font-normal">share of σ²</th>
                  <th className="py-1 pr-3 font-normal">σ part</th>
                </tr>
              </thead>
              <tbody className="tabular">
                {[
                  ...p.budget.groups.map((g) => ({
                    name: `${g.pattern} (${g.devices})`,
                    share: g.share,
                    sigma: g.sigma,
                  })),
                  ...p.budget.devices,
                ].map((d) => (
                  <tr key={d.name} className="border-t border-stone-100">
                    <td className="py-0.5 pr-3 font-mono">{d.name}</td>
                    <td className="py-0.5 pr-3">{pct(d.share)}</td>
                    <td className="py-0.5 pr-3">{eng(d.sigma)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </div>
      ) : (
        <p className="text-stone-500">No mismatch budget: the file states no `mismatch` (its avt).</p>
      )}
    </div>
  );
}
