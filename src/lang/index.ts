/**
 * The Runnel language: parse → syntax tree → elaborated network with diagnostics.
 * Pure functions, no I/O.
 */
import type { Tree } from "@lezer/common";
import { elaborateText, type ElaborateOptions } from "./elaborate";
import type { Diagnostic, ElaborationResult } from "./network";
import { parser } from "./parser";

export type * from "./network";
export { NFET, PFET, SUBSTRATE } from "./network";
export { applyPoint, pointScope, thermalVoltage, BOLTZMANN, ELEMENTARY_CHARGE } from "./point";
export { DEFAULT_LIMITS, tooLargeResult, type ElaborateOptions, type Limits } from "./elaborate";
export {
  diagnosticsDocument,
  formatDiagnostic,
  formatDiagnostics,
  LineIndex,
  toJsonDiagnostic,
  type DiagnosticsDocument,
  type JsonDiagnostic,
} from "./diagnostics";
export { parser } from "./parser";
export { parseNumber } from "./expr";
export { patternRegex } from "./expectations";

/** The Lezer syntax tree of a Runnel text (never throws; errors are ⚠ nodes). */
export function parse(text: string): Tree {
  return parser.parse(text);
}

/**
 * Elaborates a Runnel text: loops expanded, names interpolated, params evaluated,
 * units checked. `network` is null when any diagnostic is an error;
 * diagnostics are sorted by position.
 */
export function elaborate(text: string, options?: ElaborateOptions): ElaborationResult {
  return elaborateText(text, options);
}

/** The diagnostics of a Runnel text (what `runnel check` prints). */
export function checkText(text: string, options?: ElaborateOptions): Diagnostic[] {
  return elaborateText(text, options).diagnostics;
}
