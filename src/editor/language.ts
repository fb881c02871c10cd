/**
 * The Runnel language for CodeMirror: the generated Lezer parser plus folding,
 * indentation and bracket props. Highlighting tags come with the parser
 * (src/lang/highlight.ts is the grammar's propSource).
 */
import { delimitedIndent, foldInside, foldNodeProp, indentNodeProp, LRLanguage } from "@codemirror/language";
import { NodeProp } from "@lezer/common";
import { parser } from "../lang/parser";

export const runnelLanguage = LRLanguage.define({
  name: "runnel",
  parser: parser.configure({
    props: [
      foldNodeProp.add({
        // A `for` body folds to `{…}`; the only construct that spans lines.
        Block: foldInside,
      }),
      indentNodeProp.add({
        Block: delimitedIndent({ closing: "}", align: false }),
        ArgList: delimitedIndent({ closing: ")" }),
        SweepList: delimitedIndent({ closing: "]" }),
      }),
      // @detectDelim marks ( ) and { } only; marking [ ] too makes all bracket matching follow the tree.
      NodeProp.closedBy.add({ "[": ["]"] }),
      NodeProp.openedBy.add({ "]": ["["] }),
    ],
  }),
  languageData: {
    commentTokens: { line: "#" },
    closeBrackets: { brackets: ["(", "[", "{"] },
    indentOnInput: /^\s*\}$/,
  },
});
