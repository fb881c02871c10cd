import type { SideRow } from "@/app/lib/review/text-diff";

/** A text diff as two columns, the older text left and the newer right; gaps of unchanged lines folded. */
export function SideBySideDiff({ rows }: { rows: SideRow[] }) {
  return (
    <table className="w-full table-fixed border-collapse" aria-label="Side-by-side diff">
      <tbody>
        {rows.map((r, i) =>
          r.kind === "gap" ? (
            <tr key={i} className="bg-stone-50 text-stone-500">
              <td colSpan={4} className="px-2 py-0.5">
                ⋯ {r.hidden} unchanged lines
              </td>
            </tr>
          ) : (
            <tr key={i} data-line={r.kind}>
              <td className="w-10 select-none px-1 text-right text-stone-400">{r.left?.line ?? ""}</td>
              <td className={`whitespace-pre px-2 ${r.left?.kind === "removed" ? "bg-ember-50" : ""}`}>
                {r.left?.text ?? ""}
              </td>
              <td className="w-10 select-none border-l border-stone-200 px-1 text-right text-stone-400">
                {r.right?.line ?? ""}
              </td>
              <td className={`whitespace-pre px-2 ${r.right?.kind === "added" ? "bg-moss-50" : ""}`}>
                {r.right?.text ?? ""}
              </td>
            </tr>
          ),
        )}
      </tbody>
    </table>
  );
}
