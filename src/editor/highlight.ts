/**
 * Highlighting for Runnel. The one styleTags table (node → tag) lives beside the
 * grammar in src/lang/highlight.ts, where the generated parser reads it; this
 * file maps those tags to Runnel's own colours (app/globals.css palette: moss
 * greens on river-stone greys, ember for what is wrong).
 */
import { HighlightStyle, syntaxHighlighting } from "@codemirror/language";
import { tags as t } from "@lezer/highlight";

export { runnelHighlighting } from "../lang/highlight";

/** Runnel's colours, shared by the highlight style and the editor theme. */
export const palette = {
  ink: "#1f2623",
  moss50: "#f1f6f2",
  moss100: "#dcebe0",
  moss500: "#3f7d5a",
  moss600: "#2f6748",
  moss700: "#24523a",
  ember500: "#b4532a",
  ember50: "#fbf1ec",
  stone50: "#f7f7f4",
  stone200: "#e2e2dc",
  stone300: "#d0d0c8",
  stone500: "#7a7f78",
  stone600: "#5b625d",
  slate: "#3b6474",
  ochre: "#80601f",
} as const;

export const runnelHighlightStyle = HighlightStyle.define([
  { tag: t.definitionKeyword, color: palette.moss700, fontWeight: "700" },
  { tag: t.controlKeyword, color: palette.moss600, fontWeight: "700" },
  { tag: t.keyword, color: palette.moss600 },
  { tag: t.lineComment, color: palette.stone500, fontStyle: "italic" },
  { tag: t.number, color: palette.ochre },
  { tag: t.definition(t.variableName), color: palette.ink, fontWeight: "700" },
  { tag: t.special(t.variableName), color: palette.slate },
  { tag: t.local(t.variableName), color: palette.slate, fontStyle: "italic" },
  { tag: t.function(t.variableName), color: palette.moss500 },
  { tag: t.variableName, color: palette.ink },
  { tag: t.propertyName, color: palette.stone600 },
  { tag: [t.arithmeticOperator, t.definitionOperator, t.punctuation, t.separator], color: palette.stone600 },
  { tag: [t.paren, t.squareBracket, t.brace], color: palette.stone600 },
  { tag: t.invalid, color: palette.ember500 },
]);

/** The highlighter extension: Runnel's colours for the tags of the styleTags table. */
export const runnelSyntaxHighlighting = syntaxHighlighting(runnelHighlightStyle);
