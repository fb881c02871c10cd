import type { Diagnostic, ElaborationResult, Severity } from "./network";

/** A number as a message shows it: six significant digits, and words for NaN and the infinities. */
export function fmt(v: number): string {
  if (Number.isNaN(v)) return "not a number";
  if (!Number.isFinite(v)) return v > 0 ? "infinite" : "-infinite";
  const r = Number(v.toPrecision(6));
  const a = Math.abs(r);
  return a === 0 || (a >= 1e-3 && a < 1e6) ? String(r) : r.toExponential();
}

/** 1-based line and column (UTF-16 code units) of offsets in one text. */
export class LineIndex {
  private readonly starts: number[] = [0];

  constructor(private readonly text: string) {
    for (let i = text.indexOf("\n"); i >= 0; i = text.indexOf("\n", i + 1)) this.starts.push(i + 1);
  }

  /** Position of `offset`, clamped into [0, text.length]. */
  position(offset: number): { line: number; column: number } {
    const at = Math.max(0, Math.min(offset, this.text.length));
    let lo = 0;
    let hi = this.starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (this.starts[mid] <= at) lo = mid;
      else hi = mid - 1;
    }
    return { line: lo + 1, column: at - this.starts[lo] + 1 };
  }

  /** Offset of the end of the line holding `offset` (the newline, or the end of the text). */
  lineEnd(offset: number): number {
    const nl = this.text.indexOf("\n", offset);
    return nl < 0 ? this.text.length : nl;
  }
}

interface Pending {
  severity: Severity;
  from: number;
  to: number;
  message: string;
  hint?: string;
  repeats: number;
}

/**
 * Collects diagnostics. Invariants: every diagnostic's span lies inside the
 * text; a diagnostic at the same span and severity as an earlier one (the same
 * statement inside a loop) is counted, not repeated; at most `max` are kept.
 */
export class DiagnosticSink {
  private readonly byKey = new Map<string, Pending>();
  private readonly list: Pending[] = [];
  private dropped = 0;
  errors = 0;

  constructor(
    private readonly text: string,
    private readonly max = 1000,
  ) {}

  error(from: number, to: number, message: string, hint?: string): void {
    this.add("error", from, to, message, hint);
  }

  warning(from: number, to: number, message: string, hint?: string): void {
    this.add("warning", from, to, message, hint);
  }

  add(severity: Severity, from: number, to: number, message: string, hint?: string): void {
    if (severity === "error") this.errors++;
    const len = this.text.length;
    const f = Math.max(0, Math.min(Number.isFinite(from) ? from : 0, len));
    const t = Math.max(f, Math.min(Number.isFinite(to) ? to : f, len));
    // Loop iterations repeat a message with other names or numbers in it: same key.
    const key = `${severity}:${f}:${t}:${message.replace(/'[^']*'|-?\d+(\.\d+)?(e[+-]?\d+)?/g, "_")}`;
    const seen = this.byKey.get(key);
    if (seen) {
      seen.repeats++;
      return;
    }
    if (this.list.length >= this.max) {
      this.dropped++;
      return;
    }
    const p: Pending = { severity, from: f, to: t, message, hint, repeats: 0 };
    this.byKey.set(key, p);
    this.list.push(p);
  }

  /** The diagnostics sorted by position (errors before warnings at the same place). */
  finish(): Diagnostic[] {
    const index = new LineIndex(this.text);
    const out: Diagnostic[] = this.list.map((p) => {
      const { line, column } = index.position(p.from);
      const message = p.repeats > 0 ? `${p.message} (and ${p.repeats} more like it from this statement)` : p.message;
      const d: Diagnostic = { severity: p.severity, line, column, from: p.from, to: p.to, message };
      if (p.hint) d.hint = p.hint;
      return d;
    });
    out.sort((a, b) => a.from - b.from || (a.severity === b.severity ? 0 : a.severity === "error" ? -1 : 1));
    if (this.dropped > 0) {
      const last = out.length ? out[out.length - 1] : null;
      out.push({
        severity: last?.severity ?? "error",
        line: last?.line ?? 1,
        column: last?.column ?? 1,
        from: last?.from ?? 0,
        to: last?.to ?? 0,
        message: `${this.dropped} more diagnostics not shown`,
      });
    }
    return out;
  }
}

/** One diagnostic as the command line's JSON prints it (docs/language.md, The runnel command). */
export interface JsonDiagnostic {
  severity: Severity;
  line: number;
  column: number;
  message: string;
  hint?: string;
}

/** The diagnostics part of the command line's JSON document (docs/language.md, The runnel command). */
export interface DiagnosticsDocument {
  network: string | null;
  ok: boolean;
  diagnostics: JsonDiagnostic[];
}

export function toJsonDiagnostic(d: Diagnostic): JsonDiagnostic {
  const j: JsonDiagnostic = { severity: d.severity, line: d.line, column: d.column, message: d.message };
  if (d.hint) j.hint = d.hint;
  return j;
}

export function diagnosticsDocument(result: ElaborationResult): DiagnosticsDocument {
  return {
    network: result.network?.name ?? result.name ?? null,
    ok: result.ok,
    diagnostics: result.diagnostics.map(toJsonDiagnostic),
  };
}

/** `FILE:LINE:COLUMN: severity: message`, with `  hint: ...` on the next line when there is one. */
export function formatDiagnostic(file: string, d: Diagnostic): string {
  const head = `${file}:${d.line}:${d.column}: ${d.severity}: ${d.message}`;
  return d.hint ? `${head}\n  hint: ${d.hint}` : head;
}

export function formatDiagnostics(file: string, diagnostics: readonly Diagnostic[]): string {
  return diagnostics.map((d) => formatDiagnostic(file, d)).join("\n");
}
