import type { SyntaxNode, Tree } from "@lezer/common";
import type { DiagnosticSink, LineIndex } from "./diagnostics";
import { pinsOf, SETTING_NAMES } from "./vocabulary";

/** The statement words, in the order a designer meets them. */
export const STATEMENT_WORDS = [
  "network",
  "set",
  "param",
  "rail",
  "nfet",
  "pfet",
  "inject",
  "probe",
  "for",
  "sweep",
  "mismatch",
  "expect",
  "seek",
] as const;

const STATEMENT_HINT = `a statement starts with one of: ${STATEMENT_WORDS.join(", ")}`;
const NAMED_KEYWORDS = new Set(["network", "param", "rail", "nfet", "pfet", "inject", "probe", "expect"]);
const EXPRESSIONS = new Set([
  "Number",
  "Identifier",
  "InterpolatedName",
  "CallExpression",
  "ParenthesizedExpression",
  "UnaryExpression",
  "BinaryExpression",
  "CompareExpression",
  "AndExpression",
  "OrExpression",
  "NotExpression",
]);
const COMPARISONS = "comparisons: <, <=, >, >=, == (equal), != (not equal)";
const SEEK_EXAMPLE = "seek vh from=600m to=900m measure=lambda target=8";
const CHECK_EXAMPLE = "for example saturated devices=out*, or weak devices=* below=0.05";

interface Token {
  from: number;
  to: number;
  /** How the message names it: `'x'`, "the end of the line", "the end of the file". */
  found: string;
}

function isNameChar(c: string): boolean {
  return /[A-Za-z0-9_]/.test(c);
}

/** The token at or after `pos` (spaces skipped, a comment counts as the end of the line). */
function tokenAt(text: string, pos: number): Token {
  let i = pos;
  while (i < text.length && (text[i] === " " || text[i] === "\t" || text[i] === "\r" || text[i] === "\uFEFF")) i++;
  if (i < text.length && text[i] === "#") while (i < text.length && text[i] !== "\n") i++;
  if (i >= text.length) return { from: text.length, to: text.length, found: "the end of the file" };
  if (text[i] === "\n") return { from: i, to: i, found: "the end of the line" };
  let j = i + 1;
  if (isNameChar(text[i]) || (text[i] === "." && /[0-9]/.test(text[i + 1] ?? ""))) {
    while (j < text.length && (isNameChar(text[j]) || text[j] === "." || text[j] === "µ")) j++;
    if (text.slice(i, j).includes("..") && /[0-9]/.test(text[i])) j = text.indexOf("..", i);
  } else if (text.startsWith("..", i)) j = i + 2;
  else if (text.charCodeAt(i) >= 0xd800 && text.charCodeAt(i) < 0xdc00 && i + 1 < text.length) j = i + 2;
  return { from: i, to: j, found: `'${text.slice(i, j)}'` };
}

function significantPrev(node: SyntaxNode): SyntaxNode | null {
  let p = node.prevSibling;
  while (p && (p.name === "Comment" || p.type.isError)) p = p.prevSibling;
  return p;
}

function startsLine(text: string, pos: number): boolean {
  for (let i = pos - 1; i >= 0; i--) {
    const c = text[i];
    if (c === "\n") return true;
    if (c !== " " && c !== "\t" && c !== "\r" && c !== "\uFEFF") return false;
  }
  return true;
}

function ancestorNamed(node: SyntaxNode, name: string): boolean {
  for (let n: SyntaxNode | null = node; n; n = n.parent) if (n.name === name) return true;
  return false;
}

function describeStatement(name: string | undefined): string {
  switch (name) {
    case "DeviceStatement":
      return "device statement";
    case "ForStatement":
      return "for block";
    case undefined:
      return "statement";
    default:
      return `${name.replace("Statement", "").toLowerCase()} statement`;
  }
}

interface Explained {
  from: number;
  to: number;
  message: string;
  hint?: string;
}

function explain(err: SyntaxNode, text: string): Explained {
  const tok = tokenAt(text, err.from);
  const word = text.slice(tok.from, tok.to);
  const reserved = (STATEMENT_WORDS as readonly string[]).includes(word) && !startsLine(text, tok.from);
  const at = (message: string, hint?: string): Explained => ({
    from: tok.from,
    to: tok.to,
    message,
    hint: reserved ? `'${word}' is a statement word and cannot be used as a name` : hint,
  });
  const expected = (what: string, hint?: string) => at(`expected ${what}, found ${tok.found}`, hint);
  let parent = err.parent;
  let prev = significantPrev(err);
  // An error trailing a leaf value (`Identifier(⚠)`) is explained from the value's place.
  if (parent && (parent.name === "Identifier" || parent.name === "Number") && parent.parent) {
    prev = parent;
    parent = parent.parent;
  }
  const pname = parent?.name ?? "Network";
  const prevName = prev?.name;
  const prevText = prev ? text.slice(prev.from, prev.to) : "";
  const afterValue = prevName !== undefined && EXPRESSIONS.has(prevName);
  const valueHint = "put an operator between values (2*x, not 2 x); one statement per line";

  if (pname === "Network" || pname === "Block") {
    if (pname === "Block" && tok.found === "the end of the file" && parent) {
      const open = parent.from;
      return {
        from: open,
        to: open + 1,
        message: "this '{' is never closed: expected '}' after the loop body",
        hint: "put '}' on a line after the last statement of the loop",
      };
    }
    if (startsLine(text, tok.from) || !prev) {
      if (tok.found === "'}'") return at("unmatched '}'", "every '}' closes a for block opened with '{'");
      if (/^'[A-Za-z_]/.test(tok.found)) return at(`unknown statement ${tok.found}`, STATEMENT_HINT);
      return at(`a statement cannot start with ${tok.found}`, STATEMENT_HINT);
    }
    if (tok.found === "','") return at("unexpected ','", "pins are separated by spaces, not commas");
    return at(
      `unexpected ${tok.found} after the end of the ${describeStatement(prevName)}`,
      "each statement goes on its own line",
    );
  }

  if (parent && pname.endsWith("Statement") && !prev) {
    if (/^'[A-Za-z_]/.test(tok.found)) return at(`unknown statement ${tok.found}`, STATEMENT_HINT);
    return at(`a statement cannot start with ${tok.found}`, STATEMENT_HINT);
  }

  if (tok.found === "','" && (pname === "DeviceStatement" || pname === "InjectStatement" || pname === "Pin"))
    return at("unexpected ','", "pins are separated by spaces, not commas");
  if (tok.found === "'&'" || tok.found === "'|'" || tok.found === "'!'")
    return at(`unexpected ${tok.found}`, "conditions are joined with the words and, or, not");
  const inExpect = parent !== null && ancestorNamed(parent, "ExpectStatement");
  if (inExpect && tok.found === "'='" && pname !== "CheckOption") {
    const next = text[tok.to];
    return at(
      "'=' is not a comparison",
      next === ">" || next === "<"
        ? `write ${next}= instead; ${COMPARISONS}`
        : `write == to compare for equality; ${COMPARISONS}`,
    );
  }

  switch (pname) {
    case "ExpectStatement":
      if (prevName === "expect") return expected("a name after 'expect'");
      if (prevName === "Definition") return expected(`'=' after '${prevText}'`);
      if (prevName === "=")
        return expected(
          "a condition or a device-set check after '='",
          "for example expect ok = current(m1) > 1n, or expect sat = saturated devices=out*",
        );
      if (afterValue)
        return at(`unexpected ${tok.found} after the condition`, `${COMPARISONS}; join conditions with and, or`);
      break;
    case "DeviceCheck":
      if (tok.found === "'{'")
        return at("a name pattern has no {…} pieces", "* matches any run of characters: devices=m* covers m0, m1, …");
      return expected("devices=PATTERN or below=IC", CHECK_EXAMPLE);
    case "CheckOption": {
      const key = parent?.firstChild ? text.slice(parent.firstChild.from, parent.firstChild.to) : "";
      if (prevName === "devices" || prevName === "below") return expected(`'=' after '${prevName}'`);
      if (prevName === "=" && key === "devices")
        return expected(
          "a name pattern after 'devices='",
          "* matches any run of characters: devices=out* or devices=*",
        );
      if (prevName === "=") return expected(`a value after '${key}='`);
      return expected("devices=PATTERN or below=IC", CHECK_EXAMPLE);
    }
    case "CompareExpression":
      if (prevName === "CompareOp") return expected(`a value after '${prevText}'`);
      return at(`unexpected ${tok.found} in the comparison`, COMPARISONS);
    case "AndExpression":
    case "OrExpression":
    case "NotExpression":
      return expected(`a condition after '${prevText}'`, "for example voltage(x) > 0.1");
    case "NetworkStatement":
    case "ParamStatement":
    case "RailStatement":
    case "ProbeStatement":
    case "SetStatement":
      if (prevName && NAMED_KEYWORDS.has(prevName)) return expected(`a name after '${prevName}'`);
      if (prevName === "set") return expected("a setting name after 'set'", `settings: ${SETTING_NAMES.join(", ")}`);
      if (prevName === "Definition" || prevName === "SettingName") return expected(`'=' after '${prevText}'`);
      if (prevName === "=") return expected("a value after '='");
      if (afterValue) return at(`unexpected ${tok.found} after the value`, valueHint);
      break;
    case "DeviceStatement":
    case "InjectStatement": {
      if (prevName && NAMED_KEYWORDS.has(prevName)) return expected(`a name after '${prevName}'`);
      const kind = parent?.firstChild?.name ?? "nfet";
      const pins = pinsOf(kind === "inject" || kind === "pfet" ? kind : "nfet").join(", ");
      return expected(
        `a pin such as ${kind === "inject" ? "from=NODE" : "gate=NODE"}`,
        `${kind} pins: ${pins}, written key=value`,
      );
    }
    case "Pin":
      if (prevName === "PinName") return expected(`'=' after the pin name '${prevText}'`);
      if (prevName === "=") {
        const key = parent?.firstChild ? text.slice(parent.firstChild.from, parent.firstChild.to) : "";
        return expected(`a value after '${key}='`);
      }
      if (afterValue) {
        const kind = parent?.parent?.firstChild?.name ?? "nfet";
        return expected(
          `a pin such as ${kind === "inject" ? "from=NODE" : "gate=NODE"}`,
          "pins are written key=value and separated by spaces",
        );
      }
      break;
    case "ForStatement":
      if (prevName === "for") return expected("a loop variable after 'for'");
      if (prevName === "VariableName") return expected("'in' after the loop variable");
      if (prevName === "in") return expected("a range such as 0..63 after 'in'");
      if (prevName === "Range") return expected("'{' to open the loop body on this line");
      break;
    case "Range":
      if (prevName === "..") return expected("the last value of the range after '..'");
      if (afterValue && parent?.getChild("..")) return expected("'{' to open the loop body on this line");
      if (afterValue) return expected("'..' between the first and last value of the range");
      return expected("a range such as 0..63");
    case "SweepStatement":
      if (prevName === "sweep") return expected("the name of a param (or temp) after 'sweep'");
      return expected("'from A to B step S', 'from A to B points N' or 'values [a, b, ...]'");
    case "SweepRange":
      if (prevName === "from") return expected("the first value after 'from'");
      if (prevName === "to") return expected("the last value after 'to'");
      if (prevName && EXPRESSIONS.has(prevName)) {
        const seenTo = parent?.getChild("to");
        return seenTo ? expected("'step S' or 'points N'") : expected("'to' and the last value");
      }
      break;
    case "SweepStep":
      return expected("the step size after 'step'");
    case "SweepPoints":
      if (prevName === "points") return expected("the number of points after 'points'");
      return expected("'log' or the end of the line");
    case "SweepList":
      if (prevName === "values") return expected("'[' after 'values'");
      if (prevName === ",") return expected("a value after ','");
      return expected("a value, ',' or ']'");
    case "MismatchStatement":
      return expected("'runs N', 'seed S' or 'avt A'", "mismatch runs N seed S avt A");
    case "SeekStatement":
      if (prevName === "seek") return expected("the param to search after 'seek'", SEEK_EXAMPLE);
      return expected("'from=A', 'to=B', 'measure=PROBE' or 'target=T'", SEEK_EXAMPLE);
    case "SeekOption":
      if (afterValue) return expected("'from=A', 'to=B', 'measure=PROBE' or 'target=T'", SEEK_EXAMPLE);
      if (prevText !== "=") return expected(`'=' after '${prevText}'`, SEEK_EXAMPLE);
      return expected("a value after '='");
    case "MismatchOption":
      if (afterValue) return expected("'runs N', 'seed S' or 'avt A'", "mismatch runs N seed S avt A");
      return expected(`a value after '${prevText}'`);
    case "BinaryExpression":
    case "UnaryExpression":
      return expected(`a value after '${prevText}'`);
    case "ParenthesizedExpression":
      if (prevName && EXPRESSIONS.has(prevName)) return expected("')'");
      return expected("an expression after '('");
    case "ArgList":
      if (prevName && EXPRESSIONS.has(prevName)) return expected("',' or ')'");
      return expected("an argument");
    case "InterpolatedName":
      if (prevName && EXPRESSIONS.has(prevName)) return expected("'}' to close the {…} piece of the name");
      return expected("an integer expression inside {…}");
  }
  return at(`unexpected ${tok.found}`);
}

/**
 * The expression at nesting depth `maxDepth + 1` above `err` when `err` sits deeper
 * than that, else null. The parser gives up on nesting a few thousand levels deep
 * (its stack limit) and leaves error nodes there: those are the depth limit's
 * errors, not misspellings. Depth counts expression nodes, as the elaborator does.
 */
function tooDeepAt(err: SyntaxNode, maxDepth: number): SyntaxNode | null {
  const chain: SyntaxNode[] = [];
  for (let p = err.parent; p; p = p.parent) if (p.type.is("Expression")) chain.push(p);
  return chain.length > maxDepth + 1 ? chain[chain.length - 1 - (maxDepth + 1)] : null;
}

/**
 * One error per syntax-error node of `tree`, at most one per line (the first
 * error on a line explains it; later ones on that line are consequences) and
 * at most `max` in all. Error nodes on a line already reported are skipped
 * before any explaining, so a degenerate tree with many errors stays linear.
 * An error nested deeper than `maxDepth` expressions is reported as the depth limit.
 */
export function reportSyntaxErrors(
  tree: Tree,
  text: string,
  sink: DiagnosticSink,
  lines: LineIndex,
  max = 1000,
  maxDepth = Infinity,
): number {
  const seenLines = new Set<number>();
  let count = 0;
  tree.iterate({
    enter(n) {
      if (count >= max) return false;
      if (!n.type.isError) return true;
      const line = lines.position(n.from).line;
      if (seenLines.has(line)) return false;
      seenLines.add(line);
      const deep = tooDeepAt(n.node, maxDepth);
      const e: Explained = deep
        ? {
            from: deep.from,
            to: deep.to,
            message: `this expression nests deeper than ${maxDepth} levels`,
            hint: "split it with params",
          }
        : explain(n.node, text);
      sink.error(e.from, e.to, e.message, e.hint);
      count++;
      return false;
    },
  });
  return count;
}
