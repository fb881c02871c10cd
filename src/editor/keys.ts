/**
 * The editor's keys around completion and brackets, so typing never loses a
 * line or leaves a stray brace:
 * - Enter always breaks the line. The completion list opens with nothing
 *   selected (`selectOnOpen: false` in setup.ts), so Enter accepts an option
 *   only after the list was navigated with the arrow keys; Tab accepts the
 *   selected option, or the first one.
 * - A typed closing bracket steps over the one closeBrackets inserted, also
 *   when Enter has since moved it to a line of its own: `}` typed on a blank
 *   line right above the block's `}` removes the blank line and lands after
 *   the existing brace instead of adding a second one.
 */
import {
  acceptCompletion,
  completionStatus,
  moveCompletionSelection,
  selectedCompletionIndex,
} from "@codemirror/autocomplete";
import { matchBrackets } from "@codemirror/language";
import { EditorSelection, type Extension } from "@codemirror/state";
import { EditorView, keymap, type Command } from "@codemirror/view";

/** Tab: accept the selected completion, or the first when none is selected. */
export const acceptSelectedOrFirst: Command = (view) => {
  if (completionStatus(view.state) !== "active") return false;
  if (selectedCompletionIndex(view.state) === null && !moveCompletionSelection(true)(view)) return false;
  return acceptCompletion(view);
};

const CLOSERS: Record<string, string> = { "}": "{", ")": "(", "]": "[" };

/**
 * Where a typed closing bracket `ch` at `pos` should step to, or null to insert it:
 * the end of the same bracket found after only whitespace (spaces, and at most
 * one line break from a blank line), whose opening bracket lies before `pos`.
 */
export function stepOverTarget(view: EditorView, pos: number, ch: string): { from: number; to: number } | null {
  const { state } = view;
  const line = state.doc.lineAt(pos);
  const after = state.sliceDoc(pos, Math.min(state.doc.length, pos + 400));
  const m = /^[ \t]*(\n[ \t]*)?/.exec(after)!;
  if (after[m[0].length] !== ch) return null;
  const close = pos + m[0].length;
  const match = matchBrackets(state, close + 1, -1);
  if (!match || !match.matched || !match.end || match.end.from >= pos) return null;
  if (state.sliceDoc(match.end.from, match.end.to) !== CLOSERS[ch]) return null;
  if (m[1] === undefined) return { from: pos, to: close + 1 };
  // The closer sits on the next line: only from a blank line, which goes away.
  if (state.sliceDoc(line.from, pos).trim() !== "" || state.sliceDoc(pos, line.to).trim() !== "") return null;
  return { from: line.from > 0 ? line.from - 1 : line.from, to: close + 1 };
}

const stepOver = EditorView.inputHandler.of((view, from, to, text) => {
  if (from !== to || !(text in CLOSERS) || view.state.readOnly) return false;
  if (view.state.selection.ranges.length !== 1) return false;
  const target = stepOverTarget(view, from, text);
  if (!target) return false;
  const close = target.to - 1;
  // Keep the existing bracket; remove a blank line before it when stepping across lines.
  const removeLine = target.from < from;
  const changes = removeLine ? { from: target.from, to: from } : [];
  view.dispatch({
    changes,
    selection: EditorSelection.cursor(removeLine ? close + 1 - (from - target.from) : close + 1),
    scrollIntoView: true,
    userEvent: "input.type",
  });
  return true;
});

/** The completion and bracket keys (Prec.high in setup.ts, ahead of the default keymaps). */
export function runnelKeys(): Extension {
  return [stepOver, keymap.of([{ key: "Tab", run: acceptSelectedOrFirst }])];
}
