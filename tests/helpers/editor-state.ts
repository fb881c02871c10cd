import { ensureSyntaxTree } from "@codemirror/language";
import type { EditorState } from "@codemirror/state";

/**
 * The state with its whole document parsed. A state's syntax tree (`syntaxTree(state)`, what completion, folding
 * and the linter read) is the one parsed when the state was made, within a 20 ms budget; on a busy machine that
 * can stop short of a small document. `ensureSyntaxTree` finishes the parse, and the next state carries the tree.
 */
export function parsed(state: EditorState): EditorState {
  if (!ensureSyntaxTree(state, state.doc.length, 5000)) throw new Error("the document did not parse within 5 s");
  return state.update({}).state;
}
