/**
 * CodeMirror 6 support for the Runnel language: `runnel()` bundles the language,
 * Runnel's highlight colours and completion; `runnelLinter()` adds the
 * diagnostics of the language's own elaboration.
 */
import { LanguageSupport } from "@codemirror/language";
import { elaboratedNames, runnelCompletionSource } from "./complete";
import { runnelSyntaxHighlighting } from "./highlight";
import { runnelLanguage } from "./language";

export { runnelLanguage } from "./language";
export { palette, runnelHighlighting, runnelHighlightStyle, runnelSyntaxHighlighting } from "./highlight";
export {
  collectNames,
  documentNames,
  elaboratedNames,
  runnelCompletionSource,
  setElaboratedNames,
  type DocumentNames,
  type ElaboratedNames,
} from "./complete";
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
