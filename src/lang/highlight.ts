import { styleTags, tags as t } from "@lezer/highlight";

/** Highlighting of the Runnel syntax tree: one table, read by the generated parser. */
export const runnelHighlighting = styleTags({
  "network set param rail nfet pfet inject probe sweep mismatch expect seek": t.definitionKeyword,
  "for in": t.controlKeyword,
  "from to step points log values runs seed avt devices below": t.keyword,
  "and or not": t.logicOperator,
  CheckName: t.atom,
  NamePattern: t.special(t.variableName),
  CompareOp: t.compareOperator,
  Comment: t.lineComment,
  Number: t.number,
  "Definition/...": t.definition(t.variableName),
  Identifier: t.variableName,
  "InterpolatedName/...": t.special(t.variableName),
  VariableName: t.local(t.variableName),
  FunctionName: t.function(t.variableName),
  PinName: t.propertyName,
  SettingName: t.propertyName,
  ArithOp: t.arithmeticOperator,
  "=": t.definitionOperator,
  "..": t.punctuation,
  ", ": t.separator,
  "( )": t.paren,
  "[ ]": t.squareBracket,
  "{ }": t.brace,
});
