/**
 * The messages between the editor and its lint worker, and the one function
 * that answers them (pure, so the same code runs in the worker, on the main
 * thread as a fallback, and in tests).
 */
import { elaborate } from "../lang/index";
import type { Diagnostic, ElaborationResult } from "../lang/network";
import type { ElaboratedNames } from "./names";

/** At most this many elaborated names are sent back for completion. */
export const MAX_PUBLISHED_NAMES = 5000;

export interface LintRequest {
  /** Increases with every request; a reply carries the id it answers. */
  id: number;
  text: string;
}

export interface LintReply {
  id: number;
  diagnostics: Diagnostic[];
  /** Names of the elaborated network; null when it has errors (the previous names stay useful). */
  names: ElaboratedNames | null;
}

/** Node and element names of an elaboration, capped at MAX_PUBLISHED_NAMES each. */
export function publishedNames(result: ElaborationResult): ElaboratedNames | null {
  const net = result.network;
  if (!net) return null;
  const nodes = net.nodes.names.slice(0, MAX_PUBLISHED_NAMES);
  const elements: string[] = [];
  const take = (names: readonly string[]) => {
    for (let i = 0; i < names.length && elements.length < MAX_PUBLISHED_NAMES; i++) elements.push(names[i]);
  };
  take(net.devices.names);
  take(net.injects.names);
  take(net.rails.map((r) => r.name));
  return { nodes, elements };
}

/** Elaborates the request's text; an exception inside the checker becomes one error diagnostic, never a crash. */
export function answerLintRequest(request: LintRequest): LintReply {
  try {
    const result = elaborate(request.text);
    return { id: request.id, diagnostics: result.diagnostics, names: publishedNames(result) };
  } catch (e) {
    const message = `the checker failed on this text (${e instanceof Error ? e.message : String(e)}); please report it`;
    return {
      id: request.id,
      diagnostics: [{ severity: "error", line: 1, column: 1, from: 0, to: 0, message }],
      names: null,
    };
  }
}
