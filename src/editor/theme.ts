/**
 * Runnel's colours in the editor (the app's palette: moss greens on river-stone greys, ember for what is wrong),
 * and the highlight style that gives each highlighting tag its colour. Which syntax node gets which tag is the one
 * styleTags table beside the grammar, src/lang/highlight.ts, which the generated parser reads.
 */
import { HighlightStyle, syntaxHighlighting } from "@codemirror/language";
import { tags as t } from "@lezer/highlight";

/**
 * Runnel's colours, shared by the highlight style and the editor theme: the theme tokens of app/globals.css
 * (`@theme static`) as CSS variables, so the palette is written in one place.
 */
export const palette = {
  ink: "var(--color-stone-ink)",
  white: "#ffffff",
  moss50: "var(--color-moss-50)",
  moss100: "var(--color-moss-100)",
  moss200: "var(--color-moss-200)",
  moss500: "var(--color-moss-500)",
  moss600: "var(--color-moss-600)",
  moss700: "var(--color-moss-700)",
  ember500: "var(--color-ember-500)",
  ember50: "var(--color-ember-50)",
  stone50: "var(--color-stone-50)",
  stone200: "var(--color-stone-200)",
  stone300: "var(--color-stone-300)",
  stone500: "var(--color-stone-500)",
  stone600: "var(--color-stone-600)",
  slate: "var(--color-tide-600)",
  ochre: "var(--color-ochre-700)",
  ochre50: "var(--color-ochre-50)",
} as const;

export const runnelHighlightStyle = HighlightStyle.define([
  { tag: t.definitionKeyword, color: palette.moss700, fontWeight: "700" },
  { tag: t.controlKeyword, color: palette.moss600, fontWeight: "700" },
  { tag: t.keyword, color: palette.moss600 },
  { tag: t.logicOperator, color: palette.moss600, fontWeight: "700" },
  { tag: t.atom, color: palette.moss700 },
  { tag: t.lineComment, color: palette.stone500, fontStyle: "italic" },
  { tag: t.number, color: palette.ochre },
  { tag: t.definition(t.variableName), color: palette.ink, fontWeight: "700" },
  { tag: t.special(t.variableName), color: palette.slate },
  { tag: t.local(t.variableName), color: palette.slate, fontStyle: "italic" },
  { tag: t.function(t.variableName), color: palette.moss500 },
  { tag: t.variableName, color: palette.ink },
  { tag: t.propertyName, color: palette.stone600 },
  {
    tag: [t.arithmeticOperator, t.compareOperator, t.definitionOperator, t.punctuation, t.separator],
    color: palette.stone600,
  },
  { tag: [t.paren, t.squareBracket, t.brace], color: palette.stone600 },
  { tag: t.invalid, color: palette.ember500 },
]);

/** The highlighter extension: Runnel's colours for the tags of the styleTags table. */
export const runnelSyntaxHighlighting = syntaxHighlighting(runnelHighlightStyle);
