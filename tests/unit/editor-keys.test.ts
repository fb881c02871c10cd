/**
 * The editor's keys around brackets and completion (src/editor/keys.ts): a typed closing bracket steps over the one
 * the editor inserted, also across the blank line Enter left.
 */
import { EditorState } from "@codemirror/state";
import type { EditorView } from "@codemirror/view";
import { describe, expect, it } from "vitest";
import { stepOverTarget } from "../../src/editor/keys";
import { runnelEditorExtensions } from "../../src/editor/setup";
import { parsed } from "../helpers/editor-state";

const view = (doc: string) =>
  ({ state: parsed(EditorState.create({ doc, extensions: runnelEditorExtensions() })) }) as unknown as EditorView;

describe("a typed closing bracket", () => {
  it("steps over the bracket right after the cursor", () => {
    const text = "probe out = voltage(x1)\n";
    const at = text.indexOf(")");
    expect(stepOverTarget(view(text), at, ")")).toEqual({ from: at, to: at + 1 });
  });

  it("steps from a blank line onto the block's own closing brace, removing the blank line", () => {
    const text = "for k in 1..4 {\n  \n}\n";
    const blank = text.indexOf("  \n") + 2;
    const close = text.lastIndexOf("}");
    expect(stepOverTarget(view(text), blank, "}")).toEqual({ from: blank - 3, to: close + 1 });
  });

  it("is inserted when no matching bracket follows, or text stands between", () => {
    expect(stepOverTarget(view("probe out = voltage(x1\n"), 21, ")")).toBeNull();
    const text = "for k in 1..4 {\n  x\n}\n";
    expect(stepOverTarget(view(text), text.indexOf("x") + 1, "}")).toBeNull();
  });
});
