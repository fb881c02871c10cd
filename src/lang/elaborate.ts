/**
 * Elaboration: a Runnel text → the elaborated network and its diagnostics. The phases, each in its own module:
 *
 * 1. parse (parser.ts) and report syntax errors (syntax.ts);
 * 2. read ahead what the top level declares (statements.ts `prescan`): a name's first declaration decides what it is;
 * 3. elaborate the statements in order: `network`, `set`, `param`, `sweep`, `mismatch` where they stand
 *    (statements.ts); element statements and `for` blocks compiled once into templates (templates.ts, compile.ts)
 *    and run (instantiate.ts), storing names compactly (names.ts) in the element tables (tables.ts); `expect`
 *    statements once every other statement has run (expectations.ts);
 * 4. check the whole network (checks.ts) and assemble it (assemble.ts).
 *
 * A statement with a syntax error is skipped, and the names it mentions silence follow-up errors. Bounds on the
 * work of one file (vocabulary.ts `Limits`) make every input end with a result, never a hang.
 */
import type { SyntaxNode } from "@lezer/common";
import { assembleNetwork } from "./assemble";
import { checkElaboration, checkSweepPoints } from "./checks";
import { Compiler } from "./compile";
import { Elaboration } from "./context";
import { DiagnosticSink } from "./diagnostics";
import { Expectations } from "./expectations";
import { Aborted, Instantiator } from "./instantiate";
import type { ElaborationResult, Network } from "./network";
import { parser } from "./parser";
import * as T from "./parser.terms";
import { prescan, Statements } from "./statements";
import { reportSyntaxErrors } from "./syntax";
import { statementsOf, Templates } from "./templates";
import { DEFAULT_LIMITS, type Limits } from "./vocabulary";

export { DEFAULT_LIMITS, type Limits } from "./vocabulary";

export interface ElaborateOptions {
  limits?: Partial<Limits>;
}

class Elaborator {
  private readonly cx: Elaboration;
  private readonly compiler: Compiler;
  private readonly statements: Statements;
  private readonly templates: Templates;
  private readonly instantiator: Instantiator;
  private readonly expectations: Expectations;

  constructor(text: string, limits: Limits) {
    this.cx = new Elaboration(text, limits);
    this.compiler = new Compiler(this.cx);
    this.statements = new Statements(this.cx, this.compiler);
    this.templates = new Templates(this.cx, this.compiler);
    this.instantiator = new Instantiator(this.cx);
    this.expectations = new Expectations(this.cx, this.compiler, this.instantiator);
  }

  run(): ElaborationResult {
    const { cx } = this;
    const tree = parser.parse(cx.text);
    const syntaxErrors = reportSyntaxErrors(
      tree,
      cx.text,
      cx.sink,
      cx.lines,
      cx.limits.maxDiagnostics,
      cx.limits.maxExpressionDepth,
    );
    const statements = statementsOf(tree.topNode);
    prescan(statements, (n) => cx.src(n), cx.declared);
    let aborted = false;
    try {
      statements.forEach((s, i) => this.topStatement(s, i));
      this.expectations.finish();
      checkElaboration(cx, syntaxErrors);
    } catch (e) {
      if (!(e instanceof Aborted)) throw e;
      aborted = true;
    }
    let network: Network | null = null;
    if (cx.sink.errors === 0 && !aborted) {
      network = assembleNetwork(cx);
      checkSweepPoints(cx, network);
    }
    const diagnostics = cx.sink.finish();
    const ok = cx.sink.errors === 0 && !aborted;
    return { network: ok ? network : null, diagnostics, ok, name: cx.name };
  }

  private topStatement(s: SyntaxNode, index: number): void {
    const { templates, statements, instantiator } = this;
    if (templates.broken(s)) return templates.noteBroken(s);
    switch (s.type.id) {
      case T.NetworkStatement:
        return statements.network(s, index);
      case T.SetStatement:
        return statements.set(s);
      case T.ParamStatement:
        return statements.param(s);
      case T.SweepStatement:
        return statements.sweep(s);
      case T.MismatchStatement:
        return statements.mismatch(s);
      case T.SeekStatement:
        return statements.seek(s);
      case T.ExpectStatement:
        return this.expectations.statement(s);
      default: {
        const t = templates.statement(s, []);
        if (!t) return templates.noteBroken(s);
        if (t.k === "for") {
          instantiator.outerFor = { from: t.from, to: t.to };
          instantiator.reserveDevices(t);
        }
        instantiator.exec([t]);
        instantiator.outerFor = null;
      }
    }
  }
}

/** The result for a text longer than the limit: one error at 1:1, nothing parsed. */
export function tooLargeResult(
  size: number,
  unit: "characters" | "bytes",
  limit = DEFAULT_LIMITS.maxSourceLength,
): ElaborationResult {
  const sink = new DiagnosticSink("", 1);
  const mb = limit / (1024 * 1024);
  sink.error(
    0,
    0,
    `the file is too large: ${size.toLocaleString("en-US")} ${unit}, the limit is ${mb.toLocaleString("en-US")} MB`,
    "use for loops instead of writing every device out",
  );
  return { network: null, diagnostics: sink.finish(), ok: false, name: null };
}

export function elaborateText(text: string, options: ElaborateOptions = {}): ElaborationResult {
  const limits: Limits = { ...DEFAULT_LIMITS, ...options.limits };
  if (text.length > limits.maxSourceLength) return tooLargeResult(text.length, "characters", limits.maxSourceLength);
  return new Elaborator(text, limits).run();
}
