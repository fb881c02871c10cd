import { ensureSyntaxTree, foldable, getIndentation, highlightingFor, matchBrackets } from "@codemirror/language";
import { EditorState } from "@codemirror/state";
import { highlightTree, tags as t } from "@lezer/highlight";
import { describe, expect, it } from "vitest";
import { runnel, runnelHighlightStyle, runnelLanguage } from "../../src/editor/index";
import { parsed } from "../helpers/editor-state";

function stateOf(doc: string): EditorState {
  return parsed(EditorState.create({ doc, extensions: [runnel()] }));
}

/** The highlight class of each token, as `text → class`. */
function classesOf(state: EditorState): Map<string, string> {
  const out = new Map<string, string>();
  const tree = ensureSyntaxTree(state, state.doc.length, 5000);
  if (!tree) throw new Error("no tree");
  highlightTree(tree, runnelHighlightStyle, (from, to, cls) => {
    const text = state.sliceDoc(from, to);
    if (!out.has(text)) out.set(text, cls);
  });
  return out;
}

const LOOP = `# a chain of four
param vb = 450m
for k in 1..4 {
  nfet m{k} gate=g source=x{k} drain=x{k+1}
  for j in 1..2 {
    inject i{k}_{j} from=x{k} to=x{j} value=1n
  }
}
sweep vb values [400m, 450m, 500m]
probe p = voltage(x1)
`;

describe("highlighting", () => {
  it("styles statement and control keywords, comments and numbers with Runnel's style", () => {
    const state = stateOf(LOOP);
    const classes = classesOf(state);
    const definitionKeyword = runnelHighlightStyle.style([t.definitionKeyword]);
    expect(definitionKeyword).toBeTruthy();
    expect(classes.get("param")).toBe(definitionKeyword);
    expect(classes.get("nfet")).toBe(definitionKeyword);
    expect(classes.get("sweep")).toBe(definitionKeyword);
    expect(classes.get("for")).toBe(runnelHighlightStyle.style([t.controlKeyword]));
    expect(classes.get("values")).toBe(runnelHighlightStyle.style([t.keyword]));
    expect(classes.get("# a chain of four")).toBe(runnelHighlightStyle.style([t.lineComment]));
    expect(classes.get("450m")).toBe(runnelHighlightStyle.style([t.number]));
    expect(classes.get("gate")).toBe(runnelHighlightStyle.style([t.propertyName]));
  });

  it("is active in a state made with runnel()", () => {
    const state = stateOf(LOOP);
    expect(highlightingFor(state, [t.definitionKeyword])).toBe(runnelHighlightStyle.style([t.definitionKeyword]));
  });
});

describe("folding", () => {
  it("folds a for block to its braces, nested blocks separately", () => {
    const state = stateOf(LOOP);
    const outer = state.doc.line(3);
    const range = foldable(state, outer.from, outer.to);
    expect(range).toEqual({ from: LOOP.indexOf("{", outer.from) + 1, to: LOOP.lastIndexOf("}") });
    const inner = state.doc.line(5);
    const innerRange = foldable(state, inner.from, inner.to);
    expect(innerRange?.from).toBe(LOOP.indexOf("{", inner.from) + 1);
    expect(state.sliceDoc(innerRange!.to, innerRange!.to + 1)).toBe("}");
    expect(state.doc.lineAt(innerRange!.to).number).toBe(7);
  });

  it("offers no fold on single-line statements", () => {
    const state = stateOf(LOOP);
    for (const n of [1, 2, 4, 9, 10]) {
      const line = state.doc.line(n);
      expect(foldable(state, line.from, line.to)).toBeNull();
    }
  });
});

describe("brackets", () => {
  it("matches braces, parentheses and list brackets", () => {
    const state = stateOf(LOOP);
    const brace = LOOP.indexOf("{\n");
    expect(matchBrackets(state, brace, 1)).toMatchObject({ matched: true, end: { from: LOOP.lastIndexOf("}") } });
    const paren = LOOP.indexOf("voltage(") + "voltage".length;
    expect(matchBrackets(state, paren, 1)).toMatchObject({ matched: true, end: { from: LOOP.indexOf(")", paren) } });
    const square = LOOP.indexOf("[");
    expect(matchBrackets(state, square, 1)).toMatchObject({ matched: true, end: { from: LOOP.indexOf("]") } });
    expect(matchBrackets(state, LOOP.indexOf("]") + 1, -1)).toMatchObject({ matched: true, end: { from: square } });
  });

  it("reports an unclosed block as unmatched", () => {
    const doc = "for k in 1..2 {\n  nfet a{k} gate=g source=s drain=d\n";
    const state = stateOf(doc);
    expect(matchBrackets(state, doc.indexOf("{"), 1)?.matched).toBe(false);
  });
});

describe("indentation and language data", () => {
  it("indents a for body by one unit and its closing brace not at all", () => {
    const doc = "for k in 1..4 {\n  nfet a{k} gate=g source=s drain=d\n}\n";
    const state = stateOf(doc);
    expect(getIndentation(state, doc.indexOf("nfet"))).toBe(2);
    expect(getIndentation(state, doc.indexOf("}"))).toBe(0);
  });

  it("comments with # and closes ( [ {", () => {
    const state = stateOf("param a = 1\n");
    expect(state.languageDataAt("commentTokens", 0)).toEqual([{ line: "#" }]);
    expect(state.languageDataAt<{ brackets: string[] }>("closeBrackets", 0)[0].brackets).toEqual(["(", "[", "{"]);
    expect(runnelLanguage.name).toBe("runnel");
  });
});
