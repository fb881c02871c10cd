import type { UnifiedRow } from "@/app/lib/review/text-diff";

/** A text diff as one column: old and new line numbers, then the line marked +, − or blank; gaps of unchanged lines folded. */
export function UnifiedDiff({ rows }: { rows: UnifiedRow[] }) {
  return (
    <table className="w-full border-collapse" aria-label="Unified diff">
      <tbody>
        {rows.map((r, i) =>
          r.kind === "gap" ? (
            <tr key={i} className="bg-stone-50 text-stone-500">
              <td colSpan={3} className="px-2 py-0.5">
                ⋯ {r.hidden} unchanged lines
              </td>
            </tr>
          ) : (
            <tr
              key={i}
              data-line={r.kind}
              className={r.kind === "added" ? "bg-moss-50" : r.kind === "removed" ? "bg-ember-50" : ""}
            >
              <td className="w-10 select-none px-1 text-right text-stone-400">{r.oldLine ?? ""}</td>
              <td className="w-10 select-none px-1 text-right text-stone-400">{r.newLine ?? ""}</td>
              <td className="whitespace-pre px-2">
                {r.kind === "added" ? "+ " : r.kind === "removed" ? "− " : "  "}
                {r.text}
              </td>
            </tr>
          ),
        )}
      </tbody>
    </table>
  );
}
