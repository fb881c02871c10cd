import type { UnifiedRow } from "@/app/lib/review/text-diff";
import { KeptLines, LineMarks } from "./line-marks";

/**
 * A text diff in one column: each line once, with its line numbers before and
 * after; a line that changed reads "was" then "now", the changed words marked
 * within the line. Long lines wrap, so a change is never off to the side.
 */
export function UnifiedDiff({ rows }: { rows: UnifiedRow[] }) {
  return (
    <table className="w-full table-fixed border-collapse" aria-label="One-column diff">
      <colgroup>
        <col className="w-10" />
        <col className="w-10" />
        <col className="w-11" />
        <col />
      </colgroup>
      <tbody>
        {rows.map((r, i) =>
          r.kind === "gap" ? (
            <KeptLines key={i} hidden={r.hidden} columns={4} />
          ) : (
            <tr key={i} data-line={r.kind} className={r.kind === "same" ? "" : "bg-stone-50"}>
              <td className="select-none px-1 text-right align-top text-stone-400">{r.oldLine ?? ""}</td>
              <td className="select-none px-1 text-right align-top text-stone-400">{r.newLine ?? ""}</td>
              <td
                className={`select-none border-l-4 px-1 align-top text-[10px] uppercase tracking-wider ${
                  r.kind === "removed"
                    ? "border-ember-500 text-ember-700"
                    : r.kind === "added"
                      ? "border-moss-500 text-moss-700"
                      : "border-transparent"
                }`}
              >
                {r.kind === "removed" ? "was" : r.kind === "added" ? "now" : ""}
              </td>
              <td className={`whitespace-pre-wrap break-all px-2 ${r.kind === "removed" ? "text-stone-600" : ""}`}>
                <LineMarks text={r.text} marks={r.marks} side={r.kind === "removed" ? "was" : "now"} />
              </td>
            </tr>
          ),
        )}
      </tbody>
    </table>
  );
}
