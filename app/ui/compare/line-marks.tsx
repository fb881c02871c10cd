/** A changed line's text with the pieces that changed marked (text-diff.ts `marks`), or the plain text. */
import type { Mark } from "@/app/lib/review/text-diff";

export function LineMarks({ text, marks, side }: { text: string; marks?: Mark[]; side: "was" | "now" }) {
  if (!marks) return <>{text || "\u00a0"}</>;
  const style =
    side === "was"
      ? "rounded-sm bg-ember-100 text-ember-700 line-through decoration-ember-500/60"
      : "rounded-sm bg-moss-100 font-semibold text-moss-700 underline decoration-moss-500 decoration-2 underline-offset-2";
  return (
    <>
      {marks.map((m, i) =>
        m.changed ? (
          <mark key={i} data-mark={side} className={style}>
            {m.text}
          </mark>
        ) : (
          <span key={i}>{m.text}</span>
        ),
      )}
    </>
  );
}

/** The row that stands for unchanged lines left out. */
export function KeptLines({ hidden, columns }: { hidden?: number; columns: number }) {
  return (
    <tr className="text-stone-500">
      <td colSpan={columns} className="px-2 py-0.5 text-center text-[11px] tracking-wide">
        <span className="border-y border-dotted border-stone-300 px-3">
          {hidden} {hidden === 1 ? "line" : "lines"} as before
        </span>
      </td>
    </tr>
  );
}
