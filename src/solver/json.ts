/**
 * The `runnel solve --json` document (docs/language.md, The runnel command): the
 * diagnostics of elaboration and solve, and one entry per point with its
 * values by name.
 */

import { type JsonDiagnostic, LineIndex } from "../lang/diagnostics";
import type { Diagnostic, Network } from "../lang/network";
import { firstDeviceAt } from "./evaluate";
import {
  type ExpectationJson,
  expectationJson,
  type ExpectationSummary,
  ExpectationTally,
} from "./expectation-summary";
import type { Method, PointResult, RunResult, SolverWarning } from "./results";

/**
 * One point of the document, by name: what the command line prints, what a
 * run's JSON export writes (with a failed point's error) and what the results
 * diff reads. A number that is not finite prints as null.
 */
export interface JsonPoint {
  params: Record<string, number>;
  nodes: Record<string, number>;
  rails: Record<string, number>;
  devices: Record<string, { current: number; ic: number | null; saturated: boolean }>;
  probes: Record<string, number | null>;
  solver: { method: Method; iterations: number; residual: number; reason?: string };
  sample: number;
  /** Whether each expectation holds at the point (null: the point was not solved); only when the network has any. */
  expectations?: Record<string, boolean | null>;
  error?: string;
}

export interface SolveJson {
  network: string | null;
  ok: boolean;
  diagnostics: JsonDiagnostic[];
  points: JsonPoint[];
  /** Only when the network has expect statements (empty when the run is not ok). */
  expectations?: ExpectationJson[];
}

const finiteOrNull = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** One point as docs/language.md (The runnel command) specifies (names as keys, null for missing numbers). */
export function pointJson(net: Network, p: PointResult): JsonPoint {
  const nodes: Record<string, number> = {};
  const names = net.nodes.names;
  for (let k = 0; k < names.length; k++) nodes[names[k]] = p.voltages[k];
  const rails: Record<string, number> = {};
  for (const r of net.rails) rails[r.name] = p.railCurrents[r.node];
  const devices: JsonPoint["devices"] = {};
  const dn = net.devices.names;
  for (let d = 0; d < dn.length; d++)
    devices[dn[d]] = { current: p.currents[d], ic: finiteOrNull(p.ic[d]), saturated: p.saturated[d] === 1 };
  const probes: Record<string, number | null> = {};
  for (const [k, v] of Object.entries(p.probes)) probes[k] = finiteOrNull(v);
  const { method, iterations, residual, reason } = p.solver;
  const out: JsonPoint = {
    params: p.params,
    nodes,
    rails,
    devices,
    probes,
    solver: { method, iterations, residual, reason },
    sample: p.sample ?? 0,
  };
  if (net.expectations.length > 0) out.expectations = pointVerdicts(net, p);
  return out;
}

/** Whether each expectation holds at a point, by name (null: the point was not solved). */
export function pointVerdicts(net: Network, p: PointResult): Record<string, boolean | null> {
  const verdicts: Record<string, boolean | null> = {};
  net.expectations.forEach((x, i) => (verdicts[x.name] = p.expectations ? p.expectations.passed[i] === 1 : null));
  return verdicts;
}

/** A tally of the network's expectations over its run. */
export function expectationTally(net: Network): ExpectationTally {
  const defs = net.expectations.map((x) => ({ name: x.name, line: x.line, unit: x.unit }));
  const samples = net.mismatch ? net.mismatch.runs : null;
  let grid = 1;
  for (const s of net.sweeps) grid *= s.values.length;
  return new ExpectationTally(defs, samples, grid);
}

/** Every expectation of `net` over the run's kept points. */
export function summarizeExpectations(net: Network, run: RunResult): ExpectationSummary[] {
  const tally = expectationTally(net);
  for (const p of run.points) tally.add(p.index, p.ok ? p.expectations : null, () => p.params);
  return tally.finish();
}

/**
 * What the document needs from a run's points, gathered point by point (so a
 * run that streams its points keeps none): each validity warning's first
 * point, each probe's first solved point where it is not a finite number, and
 * the tally of the network's expectations (when `net` is given and has any).
 */
export class RunNotes {
  points = 0;
  readonly warnings: { warning: SolverWarning; index: number; sample: number | null }[] = [];
  readonly notFinite = new Map<string, { index: number; sample: number | null }>();
  readonly expectations: ExpectationTally | null;
  private readonly seen = new Set<string>();

  constructor(net?: Network | null) {
    this.expectations = net && net.expectations.length > 0 ? expectationTally(net) : null;
  }

  note(p: PointResult): void {
    this.points++;
    this.expectations?.add(p.index, p.ok ? p.expectations : null, () => ({ ...p.params }));
    for (const w of p.warnings) {
      const key = `${w.kind}:${w.device}`;
      if (this.seen.has(key)) continue;
      this.seen.add(key);
      this.warnings.push({ warning: w, index: p.index, sample: p.sample });
    }
    if (!p.ok) return;
    for (const name in p.probes)
      if (!Number.isFinite(p.probes[name]) && !this.notFinite.has(name))
        this.notFinite.set(name, { index: p.index, sample: p.sample });
  }

  static of(points: readonly PointResult[], net?: Network | null): RunNotes {
    const n = new RunNotes(net);
    for (const p of points) n.note(p);
    return n;
  }
}

/**
 * The `runnel solve --json` document. `diagnostics` are the elaboration's;
 * solver failures become errors and validity warnings become warnings, placed
 * at the device's statement when `text` is given. `ok` is false, with no
 * points, when any diagnostic is an error or any point failed. `notes` are
 * the run's points' (made from run.points when not given). A network with
 * expect statements adds `expectations`, after the points.
 */
export function toSolveJson(
  net: Network | null,
  diagnostics: Diagnostic[],
  run: RunResult | null,
  text?: string,
  name?: string | null,
  withPoints = true,
  notes?: RunNotes,
): SolveJson {
  // (The command line's document carries no hints: `runnel check` prints those.)
  const out: JsonDiagnostic[] = diagnostics.map((d) => ({
    severity: d.severity,
    line: d.line,
    column: d.column,
    message: d.message,
  }));
  const lines = text !== undefined ? new LineIndex(text) : null;
  const at = (offset: number): { line: number; column: number } =>
    lines && offset >= 0 ? lines.position(offset) : { line: 1, column: 1 };
  let ok = !diagnostics.some((d) => d.severity === "error") && net !== null && run !== null;
  let summaries: ExpectationSummary[] | null = null;
  if (net && run) {
    const n = notes ?? RunNotes.of(run.points, net);
    summaries = n.expectations?.finish() ?? null;
    const where = (index: number, sample: number | null) =>
      n.points > 1 ? ` (first at point ${index}${sample !== null ? `, sample ${sample}` : ""})` : "";
    for (const f of run.failures) {
      const dev = f.node >= 0 ? firstDeviceAt(net, f.node) : -1;
      out.push({ severity: "error", ...at(dev >= 0 ? net.devices.at[dev] : -1), message: f.message });
    }
    for (const { warning: w, index, sample } of n.warnings)
      out.push({ severity: "warning", ...at(net.devices.at[w.device]), message: w.message + where(index, sample) });
    // A probe that is not a number (0/0, log of 0, a ratio over a current of 0 A) prints null: say so, once per probe.
    for (const probe of net.probes) {
      const first = n.notFinite.get(probe.name);
      if (!first) continue;
      out.push({
        severity: "warning",
        ...at(probe.span.from),
        message: `probe ${probe.name} is not a finite number (a division by zero, or a logarithm or root out of its domain): printed as null${where(first.index, first.sample)}`,
      });
    }
    if (!run.ok) ok = false;
  }
  const doc: SolveJson = {
    network: net ? net.name : (name ?? null),
    ok,
    diagnostics: out,
    // (Without points, a caller prints them one by one: a big run's text would not fit one string.)
    points: ok && net && run && withPoints ? run.points.map((p) => pointJson(net, p)) : [],
  };
  if (net && net.expectations.length > 0) doc.expectations = ok && summaries ? summaries.map(expectationJson) : [];
  return doc;
}
