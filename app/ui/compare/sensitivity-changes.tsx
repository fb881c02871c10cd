"use client";

/**
 * The compare page's Sensitivities section: per probe, its first-order mismatch σ before → after and the devices
 * that weigh most on it, with ∂Q/∂V_T on each side (GET /api/commits/[id]/sensitivity for both commits, computed
 * in the interactive pool and cached per commit). Each side at its file's own point: a first-order model
 * estimate, as the run page's Sensitivity view says.
 */
import { useState } from "react";
import useSWR from "swr";
import { compareSensitivities } from "@/app/lib/review/sensitivity-compare";
import type { SensitivityJson } from "@/src/solver/design-json";
import { getJson } from "@/app/ui/fetch";
import { useFormat } from "@/app/ui/notation";
import { formatRelative } from "./value-format";
import { CompareSection } from "./compare-section";

type Answer = SensitivityJson & { commitId: string };

export function SensitivityChanges({ fromId, toId }: { fromId: string; toId: string }) {
  const [open, setOpen] = useState(false);
  const before = useSWR<Answer>(open ? `/api/commits/${fromId}/sensitivity` : null, getJson);
  const after = useSWR<Answer>(open ? `/api/commits/${toId}/sensitivity` : null, getJson);
  const fmt = useFormat();
  const cmp = before.data && after.data ? compareSensitivities(before.data, after.data) : null;
  const error = before.error ?? after.error;
  return (
    <CompareSection
      id="sensitivity-diff"
      title="Sensitivities"
      slot="sensitivity-changes"
      beside={
        <>
          {!open ? (
            <button
              type="button"
              onClick={() => setOpen(true)}
              className="rounded border border-stone-300 px-2 py-0.5 text-sm text-stone-700 hover:border-moss-500"
            >
              Compare the mismatch budgets
            </button>
          ) : (
            <span className="text-sm text-stone-600">
              first-order σ from threshold mismatch, each commit at its file&apos;s own point
            </span>
          )}
        </>
      }
    >
      {error ? <p className="text-sm text-ember-500">{(error as Error).message}</p> : null}
      {open && !cmp && !error ? (
        <p className="text-sm text-stone-500">Computing both commits&apos; sensitivities…</p>
      ) : null}
      {cmp?.problems.map((p) => (
        <p key={p} className="text-sm text-amber-800">
          {p}
        </p>
      ))}
      {cmp && cmp.probes.length ? (
        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm" aria-label="Sensitivity changes">
            <thead className="text-xs text-stone-500">
              <tr>
                <th className="py-1 pr-3 font-normal">probe</th>
                <th className="py-1 pr-3 font-normal">σ before</th>
                <th className="py-1 pr-3 font-normal">σ after</th>
                <th className="py-1 pr-3 font-normal">change</th>
                <th className="py-1 pr-3 font-normal">weighs most (after)</th>
                <th className="py-1 pr-3 font-normal">∂Q/∂V_T per mV, before → after</th>
              </tr>
            </thead>
            <tbody className="tabular">
              {cmp.probes.map((p) => (
                <tr key={p.probe} className="border-t border-stone-100 align-top" data-probe={p.probe}>
                  <td className="py-1 pr-3 font-mono">{p.probe}</td>
                  <td className="py-1 pr-3">{p.before ? fmt(p.before.sigma, null) : "not in this commit"}</td>
                  <td className="py-1 pr-3">{p.after ? fmt(p.after.sigma, null) : "not in this commit"}</td>
                  <td className="py-1 pr-3">{formatRelative(p.sigmaChange)}</td>
                  <td className="py-1 pr-3 font-mono">
                    {p.after?.topDevice
                      ? `${p.after.topDevice.name} (${(100 * p.after.topDevice.share).toFixed(1)} %)`
                      : "—"}
                  </td>
                  <td className="py-1 pr-3 text-xs">
                    {p.devices.slice(0, 5).map((d) => (
                      <div key={d.device}>
                        <span className="font-mono">{d.device}</span> {fmt(d.before, null)} → {fmt(d.after, null)}
                      </div>
                    ))}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
      <p role="note" className="text-xs text-stone-500">
        First-order model estimates (Pelgrom&apos;s σ per device through the adjoint threshold sensitivities): foundry
        models and bench measurements take precedence.
      </p>
    </CompareSection>
  );
}
