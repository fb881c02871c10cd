/**
 * One elaboration's state, shared by its phases: the source and its diagnostics, what the top level declares
 * (read ahead of the statements), the values, and the tables of what has been made so far.
 */
import type { EvalFunction } from "mathjs/number";
import { DiagnosticSink, LineIndex } from "./diagnostics";
import type { PendingExpectation } from "./expectations";
import { ShapeTable } from "./names";
import type { PendingRead } from "./reads";
import type { Mismatch, Seek, Span } from "./network";
import { DeviceColumns, InjectColumns, Namespace, NodeColumns } from "./tables";
import type { Dim } from "./units";
import { Values } from "./values";
import type { Limits } from "./vocabulary";

/** What the top-level statements declare, read before any statement is elaborated. */
export interface Declarations {
  /** Offset of the first `param NAME` of each name. */
  params: Map<string, number>;
  /** Offset of the first top-level `rail NAME` (a plain name) of each name. */
  rails: Map<string, number>;
  /** Span of the first `set NAME` of each setting. */
  settings: Map<string, Span>;
  /** Names that a sweep varies (params, or temp). */
  swept: Set<string>;
}

/** A probe made, its arguments' names not yet resolved against the finished tables. */
export interface PendingProbe {
  name: string;
  span: Span;
  fn: EvalFunction;
  loopNames: string[];
  loopValues: number[];
  args: PendingRead[];
  dim: Dim;
}

/** A sweep statement's values, its param not yet checked against the params. */
export interface PendingSweep {
  param: string;
  nameFrom: number;
  nameTo: number;
  values: number[];
  log: boolean;
  span: Span;
  /** The dimension of the values, and the value that fixed it. */
  dim: Dim;
  dimFrom: number;
  dimTo: number;
}

export class Elaboration {
  readonly sink: DiagnosticSink;
  readonly lines: LineIndex;
  readonly declared: Declarations = { params: new Map(), rails: new Map(), settings: new Map(), swept: new Set() };
  readonly values = new Values(this.declared.swept);
  readonly shapes = new ShapeTable();
  readonly nodes = new NodeColumns(this.shapes);
  readonly devices = new DeviceColumns(this.shapes);
  readonly injects = new InjectColumns();
  readonly namespace: Namespace;
  readonly probes: PendingProbe[] = [];
  /** Offset of the statement that made each probe. */
  readonly probeAt = new Map<string, number>();
  readonly sweeps: PendingSweep[] = [];
  readonly expectations: PendingExpectation[] = [];
  mismatch: Mismatch | null = null;
  /** `seek` statements; the probe's name is checked once every probe is known (checks.ts). */
  readonly seeks: (Seek & { probeFrom: number; probeTo: number })[] = [];
  /** The `network NAME` statement's name. */
  name: string | null = null;

  constructor(
    readonly text: string,
    readonly limits: Limits,
  ) {
    this.sink = new DiagnosticSink(text, limits.maxDiagnostics);
    this.lines = new LineIndex(text);
    this.namespace = new Namespace(this.devices, this.sink, this.lines);
  }

  /** The source text of a node or span. */
  src(n: Span): string {
    return this.text.slice(n.from, n.to);
  }

  /** The 1-based line of an offset. */
  line(offset: number): number {
    return this.lines.position(offset).line;
  }
}
