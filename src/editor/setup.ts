/**
 * The full editor configuration the workbench uses: Runnel's language, linter,
 * completion, folding, bracket handling, search, history and Runnel's own theme.
 * Kept apart from the React component so it can be checked without a DOM.
 */
import { autocompletion, closeBrackets, closeBracketsKeymap, completionKeymap } from "@codemirror/autocomplete";
import { defaultKeymap, history, historyKeymap } from "@codemirror/commands";
import { bracketMatching, foldGutter, foldKeymap, indentOnInput } from "@codemirror/language";
import { lintGutter, lintKeymap } from "@codemirror/lint";
import { highlightSelectionMatches, searchKeymap } from "@codemirror/search";
import { Compartment, EditorState, type Extension, Prec, Transaction } from "@codemirror/state";
import {
  drawSelection,
  dropCursor,
  EditorView,
  highlightActiveLine,
  highlightActiveLineGutter,
  highlightSpecialChars,
  type KeyBinding,
  keymap,
  lineNumbers,
} from "@codemirror/view";
import { palette as c } from "./theme";
import { runnel } from "./index";
import { runnelKeys } from "./keys";
import { type RunnelLintOptions, runnelLinter } from "./lint";

/** A wavy underline in `colour` (a CSS colour or variable) under a diagnostic's range. */
const wavy = (colour: string) => ({
  textDecoration: `underline wavy ${colour}`,
  textDecorationSkipInk: "none",
  textUnderlineOffset: "3px",
  backgroundImage: "none",
});

/** Runnel's editor theme: moss greens on river-stone greys, the app's monospace font. */
export const runnelTheme = EditorView.theme(
  {
    "&": {
      height: "100%",
      fontSize: "13px",
      color: c.ink,
      backgroundColor: c.white,
      border: `1px solid ${c.stone300}`,
      borderRadius: "6px",
    },
    "&.cm-focused": { outline: `2px solid ${c.moss500}`, outlineOffset: "-1px" },
    ".cm-scroller": { fontFamily: "var(--font-mono), ui-monospace, monospace", lineHeight: "1.6", overflow: "auto" },
    ".cm-content": { caretColor: c.moss700, padding: "6px 0" },
    ".cm-cursor, .cm-dropCursor": { borderLeftColor: c.moss700, borderLeftWidth: "2px" },
    ".cm-gutters": {
      backgroundColor: c.stone50,
      color: c.stone500,
      borderRight: `1px solid ${c.stone200}`,
      borderRadius: "6px 0 0 6px",
    },
    ".cm-activeLineGutter": { backgroundColor: c.moss50, color: c.moss700 },
    ".cm-activeLine": { backgroundColor: c.moss50 },
    "&.cm-focused > .cm-scroller > .cm-selectionLayer .cm-selectionBackground, .cm-selectionBackground, .cm-content ::selection":
      { backgroundColor: c.moss100 },
    ".cm-selectionMatch": { backgroundColor: c.moss100 },
    ".cm-matchingBracket, &.cm-focused .cm-matchingBracket": {
      backgroundColor: c.moss100,
      outline: `1px solid ${c.moss500}`,
      color: "inherit",
    },
    ".cm-nonmatchingBracket, &.cm-focused .cm-nonmatchingBracket": { backgroundColor: c.ember50, color: c.ember500 },
    ".cm-foldPlaceholder": {
      backgroundColor: c.moss50,
      border: `1px solid ${c.moss100}`,
      color: c.moss700,
      padding: "0 4px",
    },
    ".cm-foldGutter .cm-gutterElement": { color: c.stone500, cursor: "pointer" },
    ".cm-searchMatch": { backgroundColor: c.ochre50, outline: `1px solid ${c.ochre}` },
    ".cm-searchMatch.cm-searchMatch-selected": { backgroundColor: c.moss100 },
    ".cm-panels": { backgroundColor: c.stone50, color: c.ink, fontFamily: "var(--font-sans), sans-serif" },
    ".cm-panels.cm-panels-bottom": { borderTop: `1px solid ${c.stone300}` },
    ".cm-panels.cm-panels-top": { borderBottom: `1px solid ${c.stone300}` },
    ".cm-tooltip": {
      backgroundColor: c.white,
      border: `1px solid ${c.stone300}`,
      borderRadius: "4px",
      fontFamily: "var(--font-sans), sans-serif",
    },
    ".cm-tooltip.cm-tooltip-autocomplete > ul": { fontFamily: "var(--font-mono), ui-monospace, monospace" },
    ".cm-tooltip.cm-tooltip-autocomplete > ul > li[aria-selected]": { backgroundColor: c.moss600, color: c.white },
    ".cm-completionDetail": { color: c.stone500, fontStyle: "normal", marginLeft: "1em" },
    ".cm-tooltip-autocomplete ul li[aria-selected] .cm-completionDetail": { color: c.moss100 },
    ".cm-completionMatchedText": { textDecoration: "none", fontWeight: "700" },
    ".cm-diagnostic": { fontFamily: "var(--font-sans), sans-serif" },
    ".cm-diagnostic-error": { borderLeft: `4px solid ${c.ember500}` },
    ".cm-diagnostic-warning": { borderLeft: `4px solid ${c.ochre}` },
    ".cm-lintRange-error": wavy(c.ember500),
    ".cm-lintRange-warning": wavy(c.ochre),
  },
  { dark: false },
);

export interface RunnelEditorOptions {
  /** Mod-s; returning false lets the key do what it otherwise would. */
  onSave?(): boolean | void;
  /** Mod-Enter; returning false lets the key insert a blank line as usual. */
  onRun?(): boolean | void;
  /** Called with each change of the text made in the editor (not with `replaceText`). */
  onChange?(text: string): void;
  lint?: RunnelLintOptions;
  /** Holds the read-only setting, so it can be switched with `readOnlyExtension`. */
  readOnly?: Compartment;
  initiallyReadOnly?: boolean;
}

/** The read-only setting, for `readOnly.reconfigure(...)`. */
export function readOnlyExtension(readOnly: boolean): Extension {
  return [EditorState.readOnly.of(readOnly), EditorView.editable.of(!readOnly)];
}

/** Every extension of the workbench's network editor. */
export function runnelEditorExtensions(options: RunnelEditorOptions = {}): Extension[] {
  const readOnly = options.readOnly ?? new Compartment();
  const bindings: KeyBinding[] = [];
  if (options.onSave) {
    const onSave = options.onSave;
    bindings.push({ key: "Mod-s", run: () => onSave() !== false });
  }
  if (options.onRun) {
    const onRun = options.onRun;
    bindings.push({ key: "Mod-Enter", run: () => onRun() !== false });
  }
  const onChange = options.onChange;
  return [
    lineNumbers(),
    highlightActiveLineGutter(),
    highlightSpecialChars(),
    history(),
    foldGutter(),
    drawSelection(),
    dropCursor(),
    indentOnInput(),
    bracketMatching(),
    closeBrackets(),
    autocompletion({ icons: false, selectOnOpen: false }),
    Prec.high(runnelKeys()),
    highlightActiveLine(),
    highlightSelectionMatches(),
    lintGutter(),
    runnel(),
    runnelLinter(options.lint),
    runnelTheme,
    readOnly.of(readOnlyExtension(options.initiallyReadOnly ?? false)),
    EditorView.contentAttributes.of({ "aria-label": "Network text", spellcheck: "false" }),
    Prec.highest(keymap.of(bindings)),
    keymap.of([
      ...closeBracketsKeymap,
      ...defaultKeymap,
      ...searchKeymap,
      ...historyKeymap,
      ...foldKeymap,
      ...completionKeymap,
      ...lintKeymap,
    ]),
    onChange
      ? EditorView.updateListener.of((u) => {
          if (u.docChanged && !u.transactions.some((tr) => tr.isUserEvent(EXTERNAL_EVENT)))
            onChange(u.state.doc.toString());
        })
      : [],
  ];
}

/** The user event of `replaceText` transactions. */
export const EXTERNAL_EVENT = "set.external";

/**
 * Replaces the whole text from outside (e.g. another commit was opened): one
 * transaction, not added to the undo history, not reported to `onChange`.
 * Does nothing when the text is already `text`.
 */
export function replaceText(view: EditorView, text: string): void {
  const doc = view.state.doc;
  if (doc.length === text.length && doc.toString() === text) return;
  view.dispatch({
    changes: { from: 0, to: doc.length, insert: text },
    userEvent: EXTERNAL_EVENT,
    annotations: Transaction.addToHistory.of(false),
  });
}
