/** Nodes, devices and rails of one analysis, a row per kind: how many moved, and which moved most. */
import type { Notation } from "@/app/lib/format";
import type { KindSummary } from "@/app/lib/review/sweep-compare";
import { formatChange, formatPointRef, formatRelative } from "./value-format";

export const KIND_LABEL: Record<string, string> = {
  "node/voltage": "node voltages",
  "device/current": "device currents",
  "device/ic": "inversion coefficients",
  "rail/current": "rail currents",
  "probe/value": "probes",
};

export function KindSummaries({ kinds, notation = "si" }: { kinds: KindSummary[]; notation?: Notation }) {
  const rows = kinds.filter((k) => k.kind !== "probe");
  if (rows.length === 0) return null;
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-xs" data-testid="kind-summary" aria-label="What moved, by kind">
        <thead className="border-b border-stone-300 text-left text-stone-600">
          <tr>
            <th className="px-2 py-1 font-medium">kind</th>
            <th className="px-2 py-1 text-right font-medium">moved</th>
            <th className="px-2 py-1 text-right font-medium">values beyond tolerance</th>
            <th className="px-2 py-1 font-medium">moved most</th>
            <th className="px-2 py-1 text-right font-medium">change</th>
            <th className="px-2 py-1 font-medium">where</th>
            <th className="px-2 py-1 font-medium">largest relative</th>
          </tr>
        </thead>
        <tbody className="tabular">
          {rows.map((k) => (
            <tr
              key={`${k.kind}/${k.quantity}`}
              data-kind={`${k.kind}/${k.quantity}`}
              className="border-b border-stone-100"
            >
              <th scope="row" className="px-2 py-1 text-left font-semibold">
                {KIND_LABEL[`${k.kind}/${k.quantity}`]}
              </th>
              <td className="px-2 py-1 text-right font-mono">
                {k.moved.toLocaleString("en-US")} of {k.entities.toLocaleString("en-US")}
              </td>
              <td className="px-2 py-1 text-right font-mono">
                {k.beyond.toLocaleString("en-US")} of {k.compared.toLocaleString("en-US")}
              </td>
              <td className="px-2 py-1 font-mono">{k.top && k.moved ? k.top.name : "—"}</td>
              <td className="px-2 py-1 text-right font-mono">
                {k.top && k.moved ? formatChange(k.top.maxAbs, k.unit, notation) : "—"}
              </td>
              <td className="px-2 py-1 text-stone-600">
                {k.top && k.moved ? formatPointRef(k.top.absAt, notation) : ""}
              </td>
              <td className="px-2 py-1 font-mono">
                {k.topRel && k.moved ? `${k.topRel.name} ${formatRelative(k.topRel.maxRel)}` : "—"}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
