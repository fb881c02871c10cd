import type { DiffRow } from "@/app/lib/review/results-diff";
import { formatDiffValue, formatRelative } from "./value-format";

/** The diffed values, one row each: beyond-tolerance rows marked and bold, within-tolerance rows greyed. */
export function ResultsTable({ rows }: { rows: DiffRow[] }) {
  return (
    <div className="overflow-x-auto rounded border border-stone-300 bg-white">
      <table className="w-full text-xs" aria-label="Results diff">
        <thead className="bg-stone-50 text-left text-stone-600">
          <tr>
            <th className="px-2 py-1">analysis</th>
            <th className="px-2 py-1">point</th>
            <th className="px-2 py-1">what</th>
            <th className="px-2 py-1">name</th>
            <th className="px-2 py-1 text-right">from</th>
            <th className="px-2 py-1 text-right">to</th>
            <th className="px-2 py-1 text-right">change</th>
            <th className="px-2 py-1 text-right">relative</th>
          </tr>
        </thead>
        <tbody className="tabular font-mono">
          {rows.map((r, i) => (
            <tr
              key={i}
              data-beyond={r.beyond ? "1" : "0"}
              className={r.beyond ? "bg-amber-50 font-semibold" : "text-stone-600"}
            >
              <td className="px-2 py-0.5 font-sans">{r.analysis}</td>
              <td className="px-2 py-0.5">{r.point}</td>
              <td className="px-2 py-0.5 font-sans">
                {r.kind} {r.quantity}
              </td>
              <td className="px-2 py-0.5">{r.name}</td>
              <td className="px-2 py-0.5 text-right">{formatDiffValue(r.from, r.quantity)}</td>
              <td className="px-2 py-0.5 text-right">{formatDiffValue(r.to, r.quantity)}</td>
              <td className="px-2 py-0.5 text-right">{formatDiffValue(r.abs, r.quantity)}</td>
              <td className="px-2 py-0.5 text-right">{formatRelative(r.rel)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
