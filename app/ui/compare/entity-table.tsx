"use client";

/**
 * A kind's entities of one analysis (node voltages, device currents, rail
 * currents…), a page at a time from GET /api/compare/entities: the server
 * sorts by |Δ| (or relative Δ, count beyond tolerance, name) and pages, so a
 * network of 10^5 devices never sends a wall of rows.
 */
import { useNotation } from "@/app/ui/notation";
import { useState } from "react";
import useSWR from "swr";
import type { EntityPage, EntitySort } from "@/app/lib/review/sweep-compare";
import { getJson } from "@/app/ui/fetch";
import { formatChange, formatPointRef, formatRelative, formatWithUnit } from "./value-format";

export interface EntityTableProps {
  /** Query of the comparison: from, to and tolerances. */
  query: Record<string, string>;
  analysis: string;
  kind: string;
  quantity: string;
  label: string;
  total: number;
}

const PAGE = 25;

export function EntityTable({ query, analysis, kind, quantity, label, total }: EntityTableProps) {
  const { notation } = useNotation();
  const [page, setPage] = useState(0);
  const [sort, setSort] = useState<EntitySort>("abs");
  const [only, setOnly] = useState(true);
  const [filter, setFilter] = useState("");
  const params = new URLSearchParams({
    ...query,
    analysis,
    kind,
    quantity,
    page: String(page),
    size: String(PAGE),
    sort,
    only: only ? "1" : "0",
    ...(filter ? { filter } : {}),
  });
  const { data, error, isLoading } = useSWR<EntityPage>(`/api/compare/entities?${params}`, getJson, {
    keepPreviousData: true,
  });
  const pages = data ? Math.max(1, Math.ceil(data.total / data.size)) : 1;
  return (
    <div className="space-y-1" data-entities={`${kind}/${quantity}`}>
      <div className="flex flex-wrap items-center gap-3 text-xs">
        <label className="flex items-center gap-1">
          order by
          <select
            aria-label={`Order ${label} by`}
            value={sort}
            onChange={(e) => {
              setSort(e.target.value as EntitySort);
              setPage(0);
            }}
            className="rounded border border-stone-300 px-1 py-0.5"
          >
            <option value="abs">|change|</option>
            <option value="rel">|relative change|</option>
            <option value="beyond">points beyond tolerance</option>
            <option value="name">name</option>
          </select>
        </label>
        <label className="flex items-center gap-1">
          <input
            type="checkbox"
            checked={only}
            onChange={(e) => {
              setOnly(e.target.checked);
              setPage(0);
            }}
          />
          only those that moved
        </label>
        <input
          aria-label={`Filter ${label} by name`}
          value={filter}
          onChange={(e) => {
            setFilter(e.target.value);
            setPage(0);
          }}
          placeholder="name contains…"
          className="w-36 rounded border border-stone-300 px-1 py-0.5"
        />
        <span className="flex-1" />
        <span className="text-stone-600" data-testid="entity-count">
          {data
            ? `${data.total.toLocaleString("en-US")} of ${total.toLocaleString("en-US")}`
            : isLoading
              ? "loading…"
              : ""}
        </span>
        <button
          type="button"
          disabled={page === 0}
          onClick={() => setPage((p) => Math.max(0, p - 1))}
          className="rounded border border-stone-300 px-2 disabled:opacity-40"
        >
          ‹ earlier
        </button>
        <span className="tabular" aria-live="polite">
          page {page + 1} of {pages}
        </span>
        <button
          type="button"
          disabled={page + 1 >= pages}
          onClick={() => setPage((p) => p + 1)}
          className="rounded border border-stone-300 px-2 disabled:opacity-40"
        >
          later ›
        </button>
      </div>
      {error ? (
        <p role="alert" className="text-xs text-ember-500">
          {(error as Error).message}
        </p>
      ) : null}
      <div className="overflow-x-auto">
        <table className="w-full text-xs" aria-label={label}>
          <thead className="border-b border-stone-300 text-left text-stone-600">
            <tr>
              <th className="px-2 py-1 font-medium">name</th>
              <th className="px-2 py-1 text-right font-medium">before → after (there)</th>
              <th className="px-2 py-1 text-right font-medium">largest change</th>
              <th className="px-2 py-1 font-medium">where</th>
              <th className="px-2 py-1 text-right font-medium">largest relative</th>
              <th className="px-2 py-1 text-right font-medium">points beyond</th>
            </tr>
          </thead>
          <tbody className="tabular font-mono">
            {data?.rows.map((r) => (
              <tr key={r.name} data-entity={r.name} data-abs={r.maxAbs ?? ""} className="border-b border-stone-100">
                <td className="px-2 py-0.5">{r.name}</td>
                <td className="px-2 py-0.5 text-right text-stone-600">
                  {formatWithUnit(r.fromAtAbs, r.unit, 4, notation)} → {formatWithUnit(r.toAtAbs, r.unit, 4, notation)}
                </td>
                <td className="px-2 py-0.5 text-right">{formatChange(r.maxAbs, r.unit, notation)}</td>
                <td className="px-2 py-0.5 font-sans text-stone-600">{formatPointRef(r.absAt, notation)}</td>
                <td className="px-2 py-0.5 text-right">{formatRelative(r.maxRel)}</td>
                <td className="px-2 py-0.5 text-right">{r.beyond.toLocaleString("en-US")}</td>
              </tr>
            ))}
            {data && data.rows.length === 0 ? (
              <tr>
                <td colSpan={6} className="px-2 py-1 font-sans text-stone-500">
                  {only ? "Nothing moved beyond tolerance." : "No names match."}
                </td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
    </div>
  );
}

/** A kind's entity table behind a toggle, so closed tables fetch nothing. */
export function EntityDrawer(props: EntityTableProps & { moved: number }) {
  const [open, setOpen] = useState(false);
  return (
    <div className="border-t border-stone-200 pt-1">
      <button
        type="button"
        aria-expanded={open}
        onClick={() => setOpen((o) => !o)}
        className="text-xs text-moss-700 hover:underline"
      >
        {open ? "▾" : "▸"} {props.label}: {props.moved.toLocaleString("en-US")} of {props.total.toLocaleString("en-US")}{" "}
        moved — list them by change
      </button>
      {open ? <EntityTable {...props} /> : null}
    </div>
  );
}
