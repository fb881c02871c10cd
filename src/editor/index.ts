/**
 * CodeMirror 6 support for the Runnel language: `runnel()` bundles the language,
 * Runnel's highlight colours and completion; `runnelLinter()` adds the
 * diagnostics of the language's own elaboration.
 */
import { LanguageSupport } from "@codemirror/language";
import { runnelCompletionSource } from "./complete";
import { elaboratedNames } from "./names";
import { runnelSyntaxHighlighting } from "./theme";
import { runnelLanguage } from "./language";

export { runnelLanguage } from "./language";
export { runnelHighlighting } from "../lang/highlight";
export { palette, runnelHighlightStyle, runnelSyntaxHighlighting } from "./theme";
export {
  collectNames,
  documentNames,
  elaboratedNames,
  setElaboratedNames,
  type DocumentNames,
  type ElaboratedNames,
} from "./names";
export { runnelCompletionSource } from "./complete";
export {
  LintClient,
  runnelLinter,
  runnelLintSource,
  toEditorDiagnostics,
  type LintPort,
  type RunnelLintOptions,
} from "./lint";
export { answerLintRequest, type LintReply, type LintRequest } from "./lint-protocol";

/** The Runnel language with highlighting and completion (no linting: add `runnelLinter()`). */
export function runnel(): LanguageSupport {
  return new LanguageSupport(runnelLanguage, [
    runnelSyntaxHighlighting,
    runnelLanguage.data.of({ autocomplete: runnelCompletionSource }),
    elaboratedNames,
  ]);
}
