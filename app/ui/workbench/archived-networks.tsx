"use client";

/**
 * The workspace's archived networks, for an owner: folded under the list,
 * each with a button that brings it back (PATCH archived: false).
 */
import { HoverLink } from "@/app/ui/hover-link";
import { useState } from "react";
import useSWR from "swr";
import type { NetworkSummary } from "@/app/lib/networks";
import { getJson, sendJson } from "@/app/ui/fetch";

export function ArchivedNetworks({ slug, onRestored }: { slug: string; onRestored(): void }) {
  const [open, setOpen] = useState(false);
  const { data, mutate } = useSWR<{ networks: NetworkSummary[] }>(`/api/w/${slug}/networks?archived=1`, getJson);
  const [problem, setProblem] = useState<string | null>(null);
  const list = data?.networks ?? [];
  if (list.length === 0) return null;
  const restore = async (id: string) => {
    try {
      await sendJson("PATCH", `/api/networks/${id}`, { archived: false });
      setProblem(null);
      await mutate();
      onRestored();
    } catch (e) {
      setProblem((e as Error).message);
    }
  };
  return (
    <div className="text-sm" data-slot="archived-networks">
      <button
        type="button"
        onClick={() => setOpen(!open)}
        aria-expanded={open}
        className="text-stone-600 hover:text-moss-700"
      >
        {open ? "▾" : "▸"} Archived networks ({list.length})
      </button>
      {open ? (
        <ul
          aria-label="Archived networks"
          className="mt-2 divide-y divide-stone-200 rounded border border-dashed border-stone-300 bg-white"
        >
          {list.map((n) => (
            <li key={n.id} className="flex flex-wrap items-center gap-3 px-4 py-2">
              <HoverLink href={`/w/${slug}/n/${n.slug}`} className="flex-1 text-stone-700 hover:text-moss-700">
                {n.name}
              </HoverLink>
              <span className="text-xs text-stone-500">{n.commitCount} commits kept</span>
              <button
                type="button"
                onClick={() => void restore(n.id)}
                className="rounded border border-moss-600 px-2 py-0.5 text-xs text-moss-700 hover:bg-moss-50"
                aria-label={`Restore ${n.name}`}
              >
                Restore
              </button>
            </li>
          ))}
        </ul>
      ) : null}
      {problem ? <p className="text-xs text-ember-500">{problem}</p> : null}
    </div>
  );
}
