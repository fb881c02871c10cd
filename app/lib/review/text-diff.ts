/**
 * Text diff between two commits' network texts, as row models the compare page
 * renders directly (unified and side by side), built on jsdiff's line diff.
 *
 * Invariants
 * - Line numbers are 1-based; a row shows at most one old and one new line.
 * - Unchanged runs longer than 2·context lines are folded into one `gap` row
 *   (at the start and end of the text, longer than `context`).
 * - When the edit distance exceeds `maxEdit` lines, the diff is the whole old
 *   text removed and the whole new text added (`complete: false`), so a huge
 *   rewrite cannot stall the server.
 * - A removed line paired with the added line that replaces it (the k-th line
 *   of a removed block with the k-th of the added block after it) carries
 *   `marks`: the line cut into pieces, each flagged when it changed (jsdiff's
 *   word diff, whitespace kept). Joining the pieces gives the line back. Lines
 *   longer than MARK_LIMIT characters are not marked (the whole line counts).
 */
import { createTwoFilesPatch, diffLines, diffWordsWithSpace, type Change } from "diff";

/** A piece of a changed line; `changed` when it differs from the paired line. */
export interface Mark {
  text: string;
  changed: boolean;
}

/** Longest line whose changes are marked within the line. */
export const MARK_LIMIT = 4000;

export type LineKind = "same" | "added" | "removed";

export interface UnifiedRow {
  kind: LineKind | "gap";
  oldLine: number | null;
  newLine: number | null;
  /** The line without its end-of-line; for a gap, empty. */
  text: string;
  /** For a gap: how many unchanged lines it hides. */
  hidden?: number;
  /** For a paired removed or added line: its pieces, changed ones flagged (see the invariants). */
  marks?: Mark[];
}

export interface SideCell {
  line: number;
  text: string;
  kind: LineKind;
  marks?: Mark[];
}

export interface SideRow {
  kind: "same" | "changed" | "added" | "removed" | "gap";
  left: SideCell | null;
  right: SideCell | null;
  hidden?: number;
}

export interface TextDiff {
  added: number;
  removed: number;
  unified: UnifiedRow[];
  sideBySide: SideRow[];
  /** False when the texts differ by more than `maxEdit` lines and the diff is a whole replacement. */
  complete: boolean;
}

export interface TextDiffOptions {
  context?: number;
  maxEdit?: number;
}

const splitLines = (value: string): string[] => {
  const lines = value.split("\n");
  if (lines[lines.length - 1] === "") lines.pop();
  return lines.map((l) => (l.endsWith("\r") ? l.slice(0, -1) : l));
};

function changes(oldText: string, newText: string, maxEdit: number): { list: Change[]; complete: boolean } {
  const list = diffLines(oldText, newText, { maxEditLength: maxEdit });
  if (list) return { list, complete: true };
  const whole: Change[] = [];
  if (oldText) whole.push({ value: oldText, added: false, removed: true, count: splitLines(oldText).length });
  if (newText) whole.push({ value: newText, added: true, removed: false, count: splitLines(newText).length });
  return { list: whole, complete: false };
}

/** Line diff of two texts (see the invariants at the top). */
export function diffText(oldText: string, newText: string, options: TextDiffOptions = {}): TextDiff {
  const context = options.context ?? 3;
  const { list, complete } = changes(oldText, newText, options.maxEdit ?? 4000);

  // Flat line list first; folding and pairing work on it.
  const flat: UnifiedRow[] = [];
  let o = 1;
  let n = 1;
  let added = 0;
  let removed = 0;
  for (const c of list) {
    for (const text of splitLines(c.value)) {
      if (c.added) {
        flat.push({ kind: "added", oldLine: null, newLine: n++, text });
        added++;
      } else if (c.removed) {
        flat.push({ kind: "removed", oldLine: o++, newLine: null, text });
        removed++;
      } else flat.push({ kind: "same", oldLine: o++, newLine: n++, text });
    }
  }

  markPairs(flat);
  const unified = fold(flat, context);
  return { added, removed, unified, sideBySide: pairSides(unified), complete };
}

/** Marks, within each removed line paired with an added one, the pieces that changed (see the invariants). */
function markPairs(flat: UnifiedRow[]): void {
  let i = 0;
  while (i < flat.length) {
    if (flat[i].kind !== "removed") {
      i++;
      continue;
    }
    const start = i;
    while (i < flat.length && flat[i].kind === "removed") i++;
    const mid = i;
    while (i < flat.length && flat[i].kind === "added") i++;
    for (let k = 0; k < Math.min(mid - start, i - mid); k++) {
      const was = flat[start + k];
      const now = flat[mid + k];
      if (was.text.length > MARK_LIMIT || now.text.length > MARK_LIMIT) continue;
      const parts = diffWordsWithSpace(was.text, now.text);
      was.marks = parts.filter((p) => !p.added).map((p) => ({ text: p.value, changed: !!p.removed }));
      now.marks = parts.filter((p) => !p.removed).map((p) => ({ text: p.value, changed: !!p.added }));
    }
  }
}

/** Folds long unchanged runs into gap rows, keeping `context` lines next to each change. */
function fold(flat: UnifiedRow[], context: number): UnifiedRow[] {
  const out: UnifiedRow[] = [];
  let i = 0;
  while (i < flat.length) {
    if (flat[i].kind !== "same") {
      out.push(flat[i++]);
      continue;
    }
    let j = i;
    while (j < flat.length && flat[j].kind === "same") j++;
    const atStart = i === 0;
    const atEnd = j === flat.length;
    const keepBefore = atStart ? 0 : context;
    const keepAfter = atEnd ? 0 : context;
    const runLength = j - i;
    if (runLength > keepBefore + keepAfter + 1) {
      out.push(...flat.slice(i, i + keepBefore));
      out.push({ kind: "gap", oldLine: null, newLine: null, text: "", hidden: runLength - keepBefore - keepAfter });
      out.push(...flat.slice(j - keepAfter, j));
    } else out.push(...flat.slice(i, j));
    i = j;
  }
  return out;
}

/** Side-by-side rows: a removed block and the added block after it are paired line by line. */
function pairSides(rows: UnifiedRow[]): SideRow[] {
  const out: SideRow[] = [];
  let i = 0;
  while (i < rows.length) {
    const r = rows[i];
    if (r.kind === "gap") {
      out.push({ kind: "gap", left: null, right: null, hidden: r.hidden });
      i++;
    } else if (r.kind === "same") {
      out.push({
        kind: "same",
        left: { line: r.oldLine!, text: r.text, kind: "same" },
        right: { line: r.newLine!, text: r.text, kind: "same" },
      });
      i++;
    } else {
      const dels: UnifiedRow[] = [];
      const adds: UnifiedRow[] = [];
      while (i < rows.length && rows[i].kind === "removed") dels.push(rows[i++]);
      while (i < rows.length && rows[i].kind === "added") adds.push(rows[i++]);
      for (let k = 0; k < Math.max(dels.length, adds.length); k++) {
        const d = dels[k];
        const a = adds[k];
        out.push({
          kind: d && a ? "changed" : d ? "removed" : "added",
          left: d ? { line: d.oldLine!, text: d.text, kind: "removed", ...(d.marks ? { marks: d.marks } : {}) } : null,
          right: a ? { line: a.newLine!, text: a.text, kind: "added", ...(a.marks ? { marks: a.marks } : {}) } : null,
        });
      }
    }
  }
  return out;
}

/** The unified patch text (for download or copy), with the commit ids as file labels. */
export function unifiedPatch(oldName: string, newName: string, oldText: string, newText: string, context = 3): string {
  return createTwoFilesPatch(oldName, newName, oldText, newText, undefined, undefined, { context });
}
