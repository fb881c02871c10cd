/**
 * Completion for Runnel, driven by the syntax tree: the slot at the cursor is
 * found from the token before it (`resolveInner(pos, -1)`) and its ancestors,
 * and the names offered are those of the current document (./names.ts: read
 * from its tree, plus what the last elaboration published).
 */
import {
  type Completion,
  type CompletionContext,
  type CompletionResult,
  type CompletionSource,
  insertCompletionText,
  pickedCompletion,
  startCompletion,
} from "@codemirror/autocomplete";
import { syntaxTree } from "@codemirror/language";
import type { EditorState } from "@codemirror/state";
import type { SyntaxNode, Tree } from "@lezer/common";
import { PROBE_FUNCTIONS } from "../lang/expr";
import { BUILTINS, FUNCTIONS } from "../lang/dims";
import { STATEMENT_WORDS } from "../lang/syntax";
import { documentNames, elaboratedNames } from "./names";
import {
  CHECK_DETAIL,
  CHECK_OPTIONS,
  CHECKS,
  MISMATCH_OPTIONS,
  SEEK_OPTIONS,
  MODEL_DETAIL,
  MODELS,
  NODE_PINS,
  PIN_DETAIL,
  pinsOf,
  SETTING_NAMES,
  SETTINGS,
  WEAK_INVERSION_IC,
} from "../lang/vocabulary";

/** Pins to offer when the element kind is not known (a statement being typed). */
const ANY_ELEMENT_PINS = [...new Set([...pinsOf("nfet"), ...pinsOf("pfet")])];

const WORD = /^[A-Za-z_][A-Za-z0-9_]*$/;
const OPERATORS = new Set(["+", "-", "*", "/", "^", "ArithOp", "<", "<=", ">", ">=", "==", "!=", "CompareOp"]);
const EXPRESSION_KEYWORDS = new Set(["in", "from", "to", "step", "points", "runs", "seed", "avt", "and", "or", "not"]);

/** What kind of name the cursor's slot takes. */
type Slot =
  | { kind: "statement" }
  | { kind: "pin"; statement: SyntaxNode }
  | { kind: "setting" }
  | { kind: "model" }
  | { kind: "expression"; at: SyntaxNode }
  | { kind: "condition"; at: SyntaxNode }
  | { kind: "node" }
  | { kind: "element" }
  | { kind: "rail" }
  | { kind: "devicePattern" }
  | { kind: "checkOption"; check: SyntaxNode }
  | { kind: "sweepParam" }
  | { kind: "keywords"; words: readonly string[] }
  | { kind: "seekParam" }
  | { kind: "seekOption" };

const SEEK_DETAIL: Record<(typeof SEEK_OPTIONS)[number], string> = {
  from: "lower bound of the param",
  to: "upper bound of the param",
  measure: "the probe to bring to the target",
  target: "the value the probe should reach",
};

function ancestor(node: SyntaxNode | null, name: string): SyntaxNode | null {
  for (let n = node; n; n = n.parent) if (n.name === name) return n;
  return null;
}

function isStatement(node: SyntaxNode): boolean {
  return node.type.is("Statement");
}

/** The word being typed: a name-like leaf (or error run) that ends at `pos`. */
function wordBefore(state: EditorState, tree: Tree, pos: number): { from: number; node: SyntaxNode } | null {
  const node = tree.resolveInner(pos, -1);
  if (node.to !== pos || node.from === pos) return null;
  if (node.type.isError) {
    const m = /[A-Za-z_][A-Za-z0-9_]*$/.exec(state.sliceDoc(node.from, pos));
    if (!m) return null;
    const from = pos - m[0].length;
    const before = state.sliceDoc(from - 1, from);
    return /[0-9.µ]/.test(before) ? null : { from, node };
  }
  if (node.firstChild) return null;
  return WORD.test(state.sliceDoc(node.from, pos)) ? { from: node.from, node } : null;
}

/** Only spaces between the start of the line and `pos`. */
function atLineStart(state: EditorState, pos: number): boolean {
  const line = state.doc.lineAt(pos);
  return /^[ \t\r\uFEFF]*$/.test(state.sliceDoc(line.from, pos));
}

/** The last keyword child of `parent` (or of its nested step/points parts) that starts before `pos`. */
function lastKeyword(parent: SyntaxNode, pos: number, words: ReadonlySet<string>): string | null {
  let found: string | null = null;
  const scan = (n: SyntaxNode) => {
    for (let c = n.firstChild; c && c.from < pos; c = c.nextSibling) {
      if (words.has(c.name)) found = c.name;
      else if (c.name === "SweepStep" || c.name === "SweepPoints") scan(c);
    }
  };
  scan(parent);
  return found;
}

/** Classifies the slot at `anchor` (the start of the word being typed, or the cursor). */
function slotAt(state: EditorState, tree: Tree, anchor: number): Slot | null {
  if (atLineStart(state, anchor)) return { kind: "statement" };
  let p = anchor;
  while (p > 0 && /[ \t\r\uFEFF]/.test(state.sliceDoc(p - 1, p))) p--;
  const prev = tree.resolveInner(p, -1);
  if (prev.name === "Comment") return null;
  const parent = prev.parent;
  const name = prev.name;

  if (name === "{" && parent?.name === "Block") return { kind: "statement" };
  if (name === "InterpolatedName" && (p < prev.to || state.sliceDoc(p - 1, p) === "{"))
    return { kind: "expression", at: prev };
  if (name === "=") {
    if (parent?.name === "SetStatement") {
      const setting = parent.getChild("SettingName");
      return setting && state.sliceDoc(setting.from, setting.to) === "model"
        ? { kind: "model" }
        : { kind: "expression", at: prev };
    }
    if (parent?.name === "Pin") {
      const pin = parent.getChild("PinName");
      return pin && NODE_PINS.has(state.sliceDoc(pin.from, pin.to))
        ? { kind: "node" }
        : { kind: "expression", at: prev };
    }
    if (parent?.name === "ExpectStatement") return { kind: "condition", at: prev };
    if (parent?.name === "CheckOption" && parent.firstChild?.name === "devices") return { kind: "devicePattern" };
    return { kind: "expression", at: prev };
  }
  if (name === "(" || name === ",") {
    if (parent?.name === "ArgList") {
      const fn = parent.parent?.getChild("FunctionName");
      const fnName = fn ? state.sliceDoc(fn.from, fn.to) : "";
      if (fnName === "voltage") return { kind: "node" };
      if (fnName === "current") return { kind: "element" };
      if (fnName === "power") return { kind: "rail" };
    }
    return { kind: "expression", at: prev };
  }
  if (name === "[" || name === ".." || OPERATORS.has(name) || (parent && OPERATORS.has(parent.name))) {
    return { kind: "expression", at: prev };
  }
  if (EXPRESSION_KEYWORDS.has(name)) return { kind: "expression", at: prev };
  if (name === "set") return { kind: "setting" };
  if (name === "sweep") return { kind: "sweepParam" };
  if (name === "mismatch") return { kind: "keywords", words: MISMATCH_OPTIONS };
  if (name === "seek") return { kind: "seekParam" };
  if (name === "Identifier" && parent?.name === "SeekStatement") return { kind: "seekOption" };
  if (name === "VariableName" && parent?.name === "ForStatement") return { kind: "keywords", words: ["in"] };
  if (name === "Identifier" && parent?.name === "SweepStatement")
    return { kind: "keywords", words: ["from", "values"] };

  // The token before ends an expression or a name: what may follow depends on the statement part.
  const statement = ancestorStatement(prev);
  if (!statement) return null;
  if (statement.name === "DeviceStatement" || statement.name === "InjectStatement") {
    const def = statement.getChild("Definition");
    if (def && p >= def.to) return { kind: "pin", statement };
    return null;
  }
  if (statement.name === "SweepStatement") {
    const range = ancestor(prev, "SweepRange");
    if (!range) return null;
    switch (lastKeyword(range, p, new Set(["from", "to", "step", "points", "log"]))) {
      case "from":
        return { kind: "keywords", words: ["to"] };
      case "to":
        return { kind: "keywords", words: ["step", "points"] };
      case "points":
        return { kind: "keywords", words: ["log"] };
      default:
        return null;
    }
  }
  if (statement.name === "MismatchStatement") return { kind: "keywords", words: MISMATCH_OPTIONS };
  if (statement.name === "SeekStatement") return { kind: "seekOption" };
  if (statement.name === "ExpectStatement") {
    const check = ancestor(prev, "DeviceCheck");
    if (check) return { kind: "checkOption", check };
    const value = statement.getChild("Expression");
    // `saturated` alone parses as a name until its devices= is written.
    if (value?.name === "Identifier" && (CHECKS as readonly string[]).includes(state.sliceDoc(value.from, value.to)))
      return { kind: "checkOption", check: value };
    if (value && p >= value.to) return { kind: "keywords", words: ["and", "or"] };
  }
  return null;
}

function ancestorStatement(node: SyntaxNode): SyntaxNode | null {
  for (let n: SyntaxNode | null = node; n; n = n.parent) if (isStatement(n)) return n;
  return null;
}

/** Loop variables of the `for` blocks around `node`, innermost first. */
function loopVariables(state: EditorState, node: SyntaxNode, pos: number): string[] {
  const out: string[] = [];
  for (let n: SyntaxNode | null = node; n; n = n.parent) {
    if (n.name !== "ForStatement") continue;
    const block = n.getChild("Block");
    const v = n.getChild("VariableName");
    if (v && block && pos > block.from) out.push(state.sliceDoc(v.from, v.to));
  }
  return out;
}

function insideFor(node: SyntaxNode): boolean {
  return ancestor(node, "Block") !== null;
}

function optionsFor(state: EditorState, slot: Slot, pos: number, typed: SyntaxNode | null): Completion[] {
  const names = documentNames(state);
  const elaborated = state.field(elaboratedNames, false) ?? null;
  const own = typed && typed.name !== "⚠" ? state.sliceDoc(typed.from, typed.to) : null;
  switch (slot.kind) {
    case "statement":
      return STATEMENT_WORDS.map((w) => ({ label: w, type: "keyword", apply: `${w} ` }));
    case "pin": {
      const kind = slot.statement.firstChild?.name;
      const all = kind === "nfet" || kind === "pfet" || kind === "inject" ? pinsOf(kind) : ANY_ELEMENT_PINS;
      const present = new Set<string>();
      for (let pin = slot.statement.getChild("Pin"); pin; pin = pin.nextSibling) {
        const pn = pin.name === "Pin" ? pin.getChild("PinName") : null;
        if (pn && pn.from !== typed?.from) present.add(state.sliceDoc(pn.from, pn.to));
      }
      return all
        .filter((p) => !present.has(p))
        .map((p, i) => ({ label: p, type: "property", apply: `${p}=`, detail: PIN_DETAIL[p], boost: -i }));
    }
    case "setting":
      return SETTING_NAMES.map((s) => ({
        label: s,
        type: "property",
        detail: SETTINGS[s].detail,
        apply: `${s} = `,
      }));
    case "model":
      return MODELS.map((m) => ({ label: m, type: "enum", detail: MODEL_DETAIL[m] }));
    case "sweepParam":
      return [
        ...names.params.map((p) => ({ label: p.name, type: "variable", detail: "param" })),
        { label: "temp", type: "constant", detail: "temperature, kelvin" },
      ];
    case "keywords":
      return slot.words.map((w) => ({ label: w, type: "keyword", apply: `${w} ` }));
    case "seekParam":
      return names.params.map((p) => ({ label: p.name, type: "variable", detail: "param" }));
    case "seekOption":
      return SEEK_OPTIONS.map((w) => ({ label: w, type: "keyword", detail: SEEK_DETAIL[w], apply: `${w}=` }));
    case "node": {
      const seen = new Set<string>();
      const out: Completion[] = [];
      const add = (label: string, detail: string, boost: number) => {
        if (seen.has(label) || label === own) return;
        seen.add(label);
        out.push({ label, type: "variable", detail, boost });
      };
      for (const r of names.rails) add(r, "rail", 2);
      for (const n of names.nodes) add(n, "node", 1);
      if (typed ? insideFor(typed) : insideFor(syntaxTree(state).resolveInner(pos, -1))) {
        for (const n of names.patterns) add(n, "node pattern", 0);
      }
      if (elaborated) for (const n of elaborated.nodes) add(n, "node", -1);
      return out;
    }
    case "element": {
      const seen = new Set<string>();
      const out: Completion[] = [];
      const add = (label: string, detail: string) => {
        if (seen.has(label) || label === own) return;
        seen.add(label);
        out.push({ label, type: "variable", detail });
      };
      for (const d of names.devices) add(d.name, d.kind);
      for (const i of names.injects) add(i, "inject");
      for (const r of names.rails) add(r, "rail");
      if (elaborated) for (const e of elaborated.elements) add(e, "element");
      return out;
    }
    case "rail":
      return names.rails.filter((r) => r !== own).map((r) => ({ label: r, type: "variable", detail: "rail" }));
    case "devicePattern": {
      const out: Completion[] = [{ label: "*", type: "variable", detail: "every device", boost: 2 }];
      for (const q of names.devicePatterns)
        out.push({ label: q, type: "variable", detail: "devices of a loop", boost: 1 });
      for (const d of names.devices) out.push({ label: d.name, type: "variable", detail: d.kind });
      return out.filter((o) => o.label !== own);
    }
    case "checkOption": {
      const kind = slot.check.name === "Identifier" ? slot.check : slot.check.getChild("CheckName");
      const weak = kind !== null && state.sliceDoc(kind.from, kind.to) === "weak";
      const present = new Set<string>();
      for (let o = slot.check.getChild("CheckOption"); o; o = o.nextSibling)
        if (o.name === "CheckOption" && o.firstChild && o.firstChild.from !== typed?.from)
          present.add(o.firstChild.name);
      return CHECK_OPTIONS.filter((o) => !present.has(o) && (o !== "below" || weak)).map((o) => ({
        label: o,
        type: "property",
        apply: `${o}=`,
        detail:
          o === "devices"
            ? "name pattern: out*, lat*, *"
            : `inversion coefficient bound (default ${WEAK_INVERSION_IC})`,
      }));
    }
    case "condition":
    case "expression": {
      const at = slot.at;
      const paramStatement = ancestor(at, "ParamStatement");
      const inExpect = ancestor(at, "ExpectStatement") !== null;
      const inProbe = inExpect || ancestor(at, "ProbeStatement") !== null;
      const out: Completion[] = [];
      if (slot.kind === "condition")
        for (const c of CHECKS)
          out.push({ label: c, type: "keyword", detail: CHECK_DETAIL[c], apply: `${c} devices=` });
      if (inExpect) {
        for (const p of names.probes) out.push({ label: p, type: "variable", detail: "probe", boost: 2 });
        out.push({ label: "not", type: "keyword", apply: "not " });
      }
      for (const v of loopVariables(state, at, pos))
        out.push({ label: v, type: "variable", detail: "loop variable", boost: 3 });
      for (const p of names.params) {
        if (paramStatement && p.at >= paramStatement.from) continue;
        out.push({ label: p.name, type: "variable", detail: "param", boost: 2 });
      }
      for (const b of Object.keys(BUILTINS))
        out.push({ label: b, type: "constant", detail: BUILTIN_INFO[b], boost: 1 });
      if (inProbe) {
        for (const f of PROBE_FUNCTIONS)
          out.push({ label: f, type: "function", apply: probeCall(f), detail: PROBE_INFO[f], boost: 1 });
      }
      for (const f of Object.keys(FUNCTIONS)) out.push({ label: f, type: "function", apply: `${f}(` });
      return out;
    }
  }
}

const BUILTIN_INFO: Record<string, string> = {
  ut: "thermal voltage k·temp/q, volts",
  kappa: "subthreshold slope factor",
  temp: "temperature, kelvin",
  pi: "π",
  e: "Euler's number",
};

const PROBE_INFO: Record<string, string> = {
  voltage: "voltage(node), volts",
  current: "current(device, inject or rail), amperes",
  power: "power() or power(rail, …): power drawn from the rails, watts",
};

/**
 * Applies voltage/current as `voltage()` with the cursor between the brackets
 * and opens the list of the node (or device) names that may go there.
 */
function probeCall(fn: string): Completion["apply"] {
  return (view, completion, from, to) => {
    view.dispatch({
      ...insertCompletionText(view.state, `${fn}()`, from, to),
      annotations: pickedCompletion.of(completion),
    });
    const head = view.state.selection.main.head;
    view.dispatch({ selection: { anchor: head - 1 } });
    startCompletion(view);
  };
}

/**
 * The completion source. Without a typed word it answers only when asked
 * explicitly, right after `=`, `(` or `,`, or after the `{` of an
 * interpolation, so the list does not pop up on every space or block brace.
 */
export const runnelCompletionSource: CompletionSource = (context: CompletionContext): CompletionResult | null => {
  const { state, pos } = context;
  const tree = syntaxTree(state);
  const here = tree.resolveInner(pos, -1);
  if (here.name === "Comment" || here.name === "Number") return null;
  const word = wordBefore(state, tree, pos);
  const anchor = word ? word.from : pos;
  const slot = slotAt(state, tree, anchor);
  if (!slot) return null;
  if (!word && !context.explicit) {
    const before = state.sliceDoc(pos - 1, pos);
    const trigger =
      before === "=" ||
      before === "(" ||
      before === "," ||
      (before === "{" && (slot.kind === "expression" || slot.kind === "condition"));
    if (!trigger) return null;
  }
  const options = optionsFor(state, slot, pos, word?.node ?? null);
  if (options.length === 0) return null;
  return { from: anchor, options, validFor: /^[A-Za-z_][A-Za-z0-9_]*$/ };
};
