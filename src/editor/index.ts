/**
 * CodeMirror 6 support for the Rill language: `rill()` bundles the language,
 * Rill's highlight colours and completion; `rillLinter()` adds the
 * diagnostics of the language's own elaboration.
 */
import { LanguageSupport } from "@codemirror/language";
import { elaboratedNames, rillCompletionSource } from "./complete";
import { rillSyntaxHighlighting } from "./highlight";
import { rillLanguage } from "./language";

export { rillLanguage } from "./language";
export { palette, rillHighlighting, rillHighlightStyle, rillSyntaxHighlighting } from "./highlight";
export {
  collectNames,
  documentNames,
  elaboratedNames,
  rillCompletionSource,
  setElaboratedNames,
  type DocumentNames,
  type ElaboratedNames,
} from "./complete";
export {
  LintClient,
  rillLinter,
  rillLintSource,
  toEditorDiagnostics,
  type LintPort,
  type RillLintOptions,
} from "./lint";
export { answerLintRequest, type LintReply, type LintRequest } from "./lint-protocol";

/** The Rill language with highlighting and completion (no linting: add `rillLinter()`). */
export function rill(): LanguageSupport {
  return new LanguageSupport(rillLanguage, [
    rillSyntaxHighlighting,
    rillLanguage.data.of({ autocomplete: rillCompletionSource }),
    elaboratedNames,
  ]);
}
