"use client";

/** Per-probe summary of one analysis: largest change, largest relative change, where, how many points moved. Sortable. */
import { useNotation } from "@/app/ui/notation";
import { useState } from "react";
import type { EntityRow } from "@/app/lib/review/sweep-compare";
import { formatChange, formatPointRef, formatRelative, formatWithUnit } from "./value-format";

type Key = "abs" | "rel" | "beyond" | "name";
/** Rows shown before "show all": a 64-tap row has 66 probes, and the overlays must not sink under a wall of rows. */
const FIRST = 12;
const mag = (v: number | null) => (v === null || Number.isNaN(v) ? -1 : Math.abs(v));

export function ProbeSummaryTable({ rows, caption }: { rows: EntityRow[]; caption: string }) {
  const { notation } = useNotation();
  const [sort, setSort] = useState<Key>("abs");
  const [all, setAll] = useState(false);
  const sorted = [...rows].sort((a, b) =>
    sort === "name"
      ? a.name.localeCompare(b.name, "en", { numeric: true })
      : sort === "rel"
        ? mag(b.maxRel) - mag(a.maxRel)
        : sort === "beyond"
          ? b.beyond - a.beyond
          : mag(b.maxAbs) - mag(a.maxAbs),
  );
  const head = (key: Key, label: string, right = true) => (
    <th
      scope="col"
      aria-sort={sort === key ? (key === "name" ? "ascending" : "descending") : "none"}
      className={`px-2 py-1 font-medium ${right ? "text-right" : "text-left"}`}
    >
      <button type="button" onClick={() => setSort(key)} className="hover:underline">
        {label}
        {sort === key ? (key === "name" ? " ▴" : " ▾") : ""}
      </button>
    </th>
  );
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-xs" data-testid="probe-summary" aria-label={caption}>
        <thead className="border-b border-stone-300 text-stone-600">
          <tr>
            {head("name", "probe", false)}
            <th className="px-2 py-1 text-right font-medium">before → after (there)</th>
            {head("abs", "largest change")}
            {head("rel", "largest relative")}
            <th className="px-2 py-1 text-left font-medium">where</th>
            {head("beyond", "points beyond tolerance")}
          </tr>
        </thead>
        <tbody className="tabular font-mono">
          {(all ? sorted : sorted.slice(0, FIRST)).map((r) => (
            <tr
              key={r.name}
              data-probe={r.name}
              data-moved={r.beyond > 0 ? "1" : "0"}
              className="border-b border-stone-100"
            >
              <th scope="row" className="px-2 py-1 text-left font-semibold">
                {r.beyond > 0 ? (
                  <span aria-hidden className="mr-1 text-ochre-700">
                    ◆
                  </span>
                ) : null}
                {r.name}
              </th>
              <td className="px-2 py-1 text-right text-stone-600">
                {formatWithUnit(r.fromAtAbs, r.unit, 4, notation)} → {formatWithUnit(r.toAtAbs, r.unit, 4, notation)}
              </td>
              <td className="px-2 py-1 text-right">{formatChange(r.maxAbs, r.unit, notation)}</td>
              <td className="px-2 py-1 text-right">{formatRelative(r.maxRel)}</td>
              <td className="px-2 py-1 font-sans text-stone-600">{formatPointRef(r.absAt, notation)}</td>
              <td className="px-2 py-1 text-right">
                {r.beyond.toLocaleString("en-US")} / {r.compared.toLocaleString("en-US")}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      {rows.length > FIRST ? (
        <button type="button" onClick={() => setAll((a) => !a)} className="mt-1 text-xs text-moss-700 hover:underline">
          {all
            ? `show the first ${FIRST} only`
            : `show all ${rows.length.toLocaleString("en-US")} probes (${(rows.length - FIRST).toLocaleString("en-US")} more)`}
        </button>
      ) : null}
    </div>
  );
}
