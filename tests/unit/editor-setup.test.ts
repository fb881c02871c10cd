import { undoDepth } from "@codemirror/commands";
import { Compartment, EditorState, type TransactionSpec } from "@codemirror/state";
import { type EditorView, keymap } from "@codemirror/view";
import { describe, expect, it } from "vitest";
import { readOnlyExtension, replaceText, runnelEditorExtensions } from "../../src/editor/setup";

function bindingsFor(state: EditorState, key: string) {
  return state
    .facet(keymap)
    .flat()
    .filter((b) => b.key === key);
}

function fakeView(state: EditorState): EditorView {
  const holder = {
    state,
    dispatch(spec: TransactionSpec) {
      holder.state = holder.state.update(spec).state;
    },
  };
  return holder as unknown as EditorView;
}

describe("the workbench editor configuration", () => {
  it("builds one state with every extension (no duplicate-instance conflicts)", () => {
    const state = EditorState.create({ doc: "rail vdd = 1\n", extensions: runnelEditorExtensions() });
    expect(state.languageDataAt("commentTokens", 0)).toEqual([{ line: "#" }]);
    expect(state.readOnly).toBe(false);
  });

  it("binds Mod-s to onSave and Mod-Enter to onRun ahead of the default keys", () => {
    const calls: string[] = [];
    const state = EditorState.create({
      extensions: runnelEditorExtensions({
        onSave: () => void calls.push("save"),
        onRun: () => void calls.push("run"),
      }),
    });
    const view = fakeView(state);
    const [save] = bindingsFor(state, "Mod-s");
    const [run, ...others] = bindingsFor(state, "Mod-Enter");
    expect(save.run?.(view)).toBe(true);
    expect(run.run?.(view)).toBe(true);
    expect(calls).toEqual(["save", "run"]);
    // The default Mod-Enter (insert a blank line) stays, behind ours.
    expect(others.length).toBeGreaterThan(0);
  });

  it("lets the key fall through when a handler returns false", () => {
    const state = EditorState.create({ extensions: runnelEditorExtensions({ onRun: () => false }) });
    expect(bindingsFor(state, "Mod-Enter")[0].run?.(fakeView(state))).toBe(false);
  });

  it("switches read-only through its compartment", () => {
    const readOnly = new Compartment();
    let state = EditorState.create({ extensions: runnelEditorExtensions({ readOnly, initiallyReadOnly: true }) });
    expect(state.readOnly).toBe(true);
    state = state.update({ effects: readOnly.reconfigure(readOnlyExtension(false)) }).state;
    expect(state.readOnly).toBe(false);
  });
});

describe("replaceText", () => {
  it("replaces the text outside the undo history (nothing of the old text can be undone back) and skips an identical text", () => {
    let state = EditorState.create({ doc: "rail a = 1\n", extensions: runnelEditorExtensions() });
    state = state.update({ changes: { from: 0, insert: "# mine\n" }, userEvent: "input.type" }).state;
    expect(undoDepth(state)).toBe(1);
    const view = fakeView(state);
    replaceText(view, "rail b = 2\n");
    expect(view.state.doc.toString()).toBe("rail b = 2\n");
    expect(undoDepth(view.state)).toBe(0);
    const before = view.state;
    replaceText(view, "rail b = 2\n");
    expect(view.state).toBe(before);
  });
});
