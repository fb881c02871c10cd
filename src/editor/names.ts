/**
 * The names a Runnel document defines and uses, for completion: read from its syntax tree (statements read once
 * per reused subtree, so an edit costs only the subtrees it touched), plus the names the last elaboration produced
 * (loop-expanded nodes such as x1..x64), which the linter publishes through `elaboratedNames`.
 */
import { syntaxTree } from "@codemirror/language";
import { type EditorState, StateEffect, StateField } from "@codemirror/state";
import { NodeType, type SyntaxNode, Tree, type TreeBuffer } from "@lezer/common";
import { NODE_PINS } from "../lang/vocabulary";

/** Names a document defines or uses, read from its syntax tree. */
export interface DocumentNames {
  /** Params with the offset of their statement (for "earlier params only"). */
  params: { name: string; at: number }[];
  rails: string[];
  /** Names used as node pins that are not rails. */
  nodes: string[];
  /** nfet/pfet names with their kind. */
  devices: { name: string; kind: "nfet" | "pfet" }[];
  injects: string[];
  /** Interpolated names used as node pins inside `for` bodies, as written (`x{k+1}`). */
  patterns: string[];
  /** Probe names written out (not made by a loop). */
  probes: string[];
  /** Device names made by loops, as name patterns (`out{k}` → `out*`). */
  devicePatterns: string[];
}

/** Names the elaborated network holds (after loops were expanded); published by the linter. */
export interface ElaboratedNames {
  nodes: string[];
  elements: string[];
}

export const setElaboratedNames = StateEffect.define<ElaboratedNames | null>();

/** The last elaborated names for this document; kept across edits until the next lint run replaces them. */
export const elaboratedNames = StateField.define<ElaboratedNames | null>({
  create: () => null,
  update(value, tr) {
    for (const e of tr.effects) if (e.is(setElaboratedNames)) return e.value;
    return value;
  },
});

const collected = new WeakMap<Tree, DocumentNames>();

/** The names of a document, from its syntax tree (memoised per tree, and per reused subtree inside it). */
export function documentNames(state: EditorState): DocumentNames {
  const tree = syntaxTree(state);
  let names = collected.get(tree);
  if (!names) {
    names = collectNames(tree, (from, to) => state.sliceDoc(from, to));
    collected.set(tree, names);
  }
  return names;
}

/** Names found in one subtree; `at` offsets are relative to the subtree's start. */
interface PartialNames {
  params: { name: string; at: number }[];
  rails: string[];
  used: string[];
  patterns: string[];
  devices: DocumentNames["devices"];
  injects: string[];
  probes: string[];
  devicePatterns: string[];
}

/**
 * Partial names per subtree object. Lezer reuses a subtree (Tree or
 * TreeBuffer) across incremental parses only where its text is unchanged, so
 * a subtree's names stay valid wherever it moves; after an edit only the
 * subtrees along the edit are read again.
 */
const partials = new WeakMap<Tree | TreeBuffer, PartialNames>();

/** Subtrees that hold statements: read their children one by one (each memoised). */
const CONTAINERS = new Set(["Network", "Block", "ForStatement"]);

/** The names `tree` defines or uses (its text read through `text`, in document offsets). */
export function collectNames(tree: Tree, text: (from: number, to: number) => string): DocumentNames {
  const parts: { part: PartialNames; base: number }[] = [];
  gather(tree, 0, text, parts);
  const params: DocumentNames["params"] = [];
  const rails = new Set<string>();
  const used = new Set<string>();
  const patterns = new Set<string>();
  const devices: DocumentNames["devices"] = [];
  const injects: string[] = [];
  const probes: string[] = [];
  const devicePatterns = new Set<string>();
  for (const { part, base } of parts) {
    for (const p of part.params) params.push({ name: p.name, at: base + p.at });
    for (const r of part.rails) rails.add(r);
    for (const u of part.used) used.add(u);
    for (const q of part.patterns) patterns.add(q);
    for (const d of part.devices) devices.push(d);
    for (const i of part.injects) injects.push(i);
    for (const p of part.probes) probes.push(p);
    for (const q of part.devicePatterns) devicePatterns.add(q);
  }
  const nodes = [...used].filter((n) => !rails.has(n));
  return {
    params,
    rails: [...rails],
    nodes,
    devices,
    injects,
    patterns: [...patterns],
    probes,
    devicePatterns: [...devicePatterns],
  };
}

function gather(
  chunk: Tree | TreeBuffer,
  base: number,
  text: (from: number, to: number) => string,
  out: { part: PartialNames; base: number }[],
): void {
  if (chunk instanceof Tree && (chunk.type.isAnonymous || CONTAINERS.has(chunk.type.name))) {
    for (let i = 0; i < chunk.children.length; i++) gather(chunk.children[i], base + chunk.positions[i], text, out);
    return;
  }
  let part = partials.get(chunk);
  if (!part) {
    const tree = chunk instanceof Tree ? chunk : new Tree(NodeType.none, [chunk], [0], chunk.length);
    part = readStatements(tree, (from, to) => text(base + from, base + to));
    partials.set(chunk, part);
  }
  out.push({ part, base });
}

/** Names in the statements of `tree` (offsets relative to it); expressions are not entered except pin values. */
function readStatements(tree: Tree, text: (from: number, to: number) => string): PartialNames {
  const part: PartialNames = {
    params: [],
    rails: [],
    used: [],
    patterns: [],
    devices: [],
    injects: [],
    probes: [],
    devicePatterns: [],
  };
  const plainDefinition = (stmt: SyntaxNode): string | null => {
    const def = stmt.getChild("Definition");
    return def && !def.firstChild ? text(def.from, def.to) : null;
  };
  const pins = (stmt: SyntaxNode) => {
    for (let pin = stmt.getChild("Pin"); pin; pin = pin.nextSibling) {
      if (pin.name !== "Pin") continue;
      const pinName = pin.getChild("PinName");
      const value = pin.lastChild;
      if (!pinName || !value || value === pinName || !NODE_PINS.has(text(pinName.from, pinName.to))) continue;
      if (value.name === "Identifier") part.used.push(text(value.from, value.to));
      else if (value.name === "InterpolatedName" && !containsError(value))
        part.patterns.push(text(value.from, value.to));
    }
  };
  tree.iterate({
    enter(ref) {
      if (ref.type === NodeType.none || ref.type.isAnonymous || CONTAINERS.has(ref.name)) return true;
      switch (ref.name) {
        case "ParamStatement": {
          const name = plainDefinition(ref.node);
          if (name) part.params.push({ name, at: ref.from });
          return false;
        }
        case "RailStatement": {
          const name = plainDefinition(ref.node);
          if (name) part.rails.push(name);
          return false;
        }
        case "DeviceStatement": {
          const node = ref.node;
          const name = plainDefinition(node);
          if (name) part.devices.push({ name, kind: node.firstChild?.name === "pfet" ? "pfet" : "nfet" });
          else {
            const def = node.getChild("Definition");
            if (def && !containsError(def)) part.devicePatterns.push(namePattern(text(def.from, def.to)));
          }
          pins(node);
          return false;
        }
        case "ProbeStatement": {
          const name = plainDefinition(ref.node);
          if (name) part.probes.push(name);
          return false;
        }
        case "InjectStatement": {
          const node = ref.node;
          const name = plainDefinition(node);
          if (name) part.injects.push(name);
          pins(node);
          return false;
        }
        default:
          return false;
      }
    },
  });
  return part;
}

/** A loop-made name as a name pattern: every `{…}` piece becomes `*` (`out{k+1}_{j}` → `out*_*`). */
export function namePattern(written: string): string {
  let out = "";
  let depth = 0;
  for (const c of written) {
    if (c === "{") {
      if (depth++ === 0) out += "*";
    } else if (c === "}") depth--;
    else if (depth === 0) out += c;
  }
  return out;
}

export function containsError(node: SyntaxNode): boolean {
  let found = false;
  node.toTree().iterate({
    enter(n) {
      if (n.type.isError) found = true;
      return !found;
    },
  });
  return found;
}
