import type { SideCell, SideRow } from "@/app/lib/review/text-diff";
import { KeptLines, LineMarks } from "./line-marks";

/**
 * A text diff in facing columns, the older text on the left and the newer on
 * the right, each column half the width; long lines wrap inside their column
 * and the changed words are marked within the line.
 */
export function SideBySideDiff({ rows, labels }: { rows: SideRow[]; labels: [string, string] }) {
  return (
    <table className="w-full table-fixed border-collapse" aria-label="Facing-columns diff">
      <colgroup>
        <col className="w-10" />
        <col className="w-[calc(50%-2.5rem)]" />
        <col className="w-10" />
        <col className="w-[calc(50%-2.5rem)]" />
      </colgroup>
      <thead className="text-left text-[11px] uppercase tracking-wider text-stone-500">
        <tr>
          <th colSpan={2} className="px-2 py-1 font-medium">
            {labels[0]}
          </th>
          <th colSpan={2} className="border-l border-stone-300 px-2 py-1 font-medium">
            {labels[1]}
          </th>
        </tr>
      </thead>
      <tbody>
        {rows.map((r, i) =>
          r.kind === "gap" ? (
            <KeptLines key={i} hidden={r.hidden} columns={4} />
          ) : (
            <tr key={i} data-line={r.kind}>
              <Cell cell={r.left} side="was" />
              <Cell cell={r.right} side="now" divider />
            </tr>
          ),
        )}
      </tbody>
    </table>
  );
}

function Cell({ cell, side, divider = false }: { cell: SideCell | null; side: "was" | "now"; divider?: boolean }) {
  const changed = cell && cell.kind !== "same";
  const rule = !changed ? "border-transparent" : side === "was" ? "border-ember-500" : "border-moss-500";
  return (
    <>
      <td
        className={`select-none px-1 text-right align-top text-stone-400 ${divider ? "border-l border-stone-300" : ""}`}
      >
        {cell?.line ?? ""}
      </td>
      <td
        className={`whitespace-pre-wrap break-all border-l-4 px-2 align-top ${rule} ${
          cell
            ? changed
              ? "bg-stone-50"
              : ""
            : "bg-[repeating-linear-gradient(135deg,transparent_0_6px,var(--color-stone-100)_6px_8px)]"
        } ${changed && side === "was" ? "text-stone-600" : ""}`}
      >
        {cell ? <LineMarks text={cell.text} marks={cell.marks} side={side} /> : null}
      </td>
    </>
  );
}
