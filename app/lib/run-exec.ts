/**
 * Executes one queued run to its end, synchronously, against a database
 * connection: claims the run (queued → running), elaborates the commit,
 * solves every point, stores the points, and writes the final state. The run
 * worker calls it in a worker thread; the demo seed calls it in-process.
 *
 * Contracts
 * - Only a `queued` run without a cancel request is claimed; anything else is
 *   left as it is (a run canceled before it started ends canceled).
 * - Progress (`points_done`) is written at most every PROGRESS_MS.
 * - A stop request (shared flag or `cancel_requested`) ends the run canceled
 *   after the current point; the time limit ends it failed; both keep the
 *   points already solved. An exception ends it failed with its message.
 * - Points are written in transactions of at most WRITE_BATCH points, so the
 *   write lock is never held for long (readers are never blocked: WAL).
 */
import { and, eq } from "drizzle-orm";
import { commits, runs, type RunState } from "@/db/schema";
import { elaborate, type Network } from "@/src/lang/index";
import type { PointResult, RunResult } from "@/src/solver/results";
import { solveNetwork } from "@/src/solver/index";
import { db, type Q } from "@/db";
import type { StoredPoint } from "./point-codec";
import { insertPoints, layoutOf, type RunLayout } from "./results";
import { storeCommitDiff } from "./review/diffs";

/** Values of the shared stop flag. */
export const STOP_NONE = 0;
export const STOP_CANCEL = 1;
export const STOP_TIME = 2;

export interface RunTask {
  runId: string;
  /** Absolute path of the SQLite file. */
  dbFile: string;
  /** Int32Array(1) over this buffer: STOP_* set by the supervisor. */
  stop: SharedArrayBuffer;
  /**
   * Test hooks, honoured only when RUNNEL_TEST_FAULTS=1: "throw" after the first point, "slow" sleeps 25 ms per
   * point, "stuck" spins for a minute inside the first point without looking at stop requests.
   */
  fault?: "throw" | "slow" | "stuck";
}

export interface RunTaskResult {
  state: RunState;
  reason: string | null;
  pointsDone: number;
}

export interface ExecControl {
  stop?: Int32Array;
  fault?: RunTask["fault"];
  now?: () => number;
}

const PROGRESS_MS = 200;
const CANCEL_POLL_MS = 250;
const WRITE_BATCH = 64;
/** Inversion coefficient above which a device is outside weak inversion (common practice: IC < 0.1 is weak inversion). */
export const WEAK_INVERSION_LIMIT = 0.1;

/** A validity warning aggregated over a run. */
export interface RunWarning {
  kind: string;
  message: string;
  /** Points where it occurred. */
  points: number;
  /** First point where it occurred. */
  firstPoint: number;
}

export function executeRun(runId: string, control: ExecControl = {}, d: Q = db()): RunTaskResult {
  const now = control.now ?? Date.now;
  const startedAt = new Date(now());
  const claimed = d
    .update(runs)
    .set({ state: "running", startedAt })
    .where(and(eq(runs.id, runId), eq(runs.state, "queued")))
    .run().changes;
  const row = d.select().from(runs).where(eq(runs.id, runId)).get();
  if (!row) return { state: "failed", reason: "the run does not exist", pointsDone: 0 };
  if (claimed === 0) return { state: row.state, reason: row.reason, pointsDone: row.pointsDone };
  return runClaimed(d, row, startedAt.getTime(), control, now);
}

function runClaimed(
  d: Q,
  row: typeof runs.$inferSelect,
  startedAt: number,
  control: ExecControl,
  now: () => number,
): RunTaskResult {
  const runId = row.id;
  const end = (state: RunState, reason: string | null, pointsDone: number): RunTaskResult => {
    d.update(runs)
      .set({ state, reason, finishedAt: new Date(now()), pointsDone })
      .where(eq(runs.id, runId))
      .run();
    return { state, reason, pointsDone };
  };
  if (row.cancelRequested) return end("canceled", "canceled before it started", 0);
  /** Points solved, and points stored (the progress others see). */
  let done = 0;
  let stored = 0;
  try {
    const commit = d.select({ text: commits.text }).from(commits).where(eq(commits.id, row.commitId)).get();
    if (!commit) return end("failed", "the commit of this run no longer exists", 0);
    const result = elaborate(commit.text);
    if (!result.network)
      return end(
        "failed",
        `the commit has errors: ${result.diagnostics.find((x) => x.severity === "error")?.message ?? "it does not elaborate"}`,
        0,
      );
    const net = result.network;
    const layout = layoutOf(net);
    d.update(runs)
      .set({ layout: JSON.stringify(layout), model: JSON.stringify(modelOf(net)) })
      .where(eq(runs.id, runId))
      .run();

    const deadline = startedAt + row.timeLimitMs;
    let stopKind = STOP_NONE;
    let lastCancelPoll = now();
    const shouldStop = (): boolean => {
      if (stopKind !== STOP_NONE) return true;
      if (control.fault === "slow") sleep(25);
      const flag = control.stop ? Atomics.load(control.stop, 0) : STOP_NONE;
      if (flag !== STOP_NONE) stopKind = flag;
      else if (now() > deadline) stopKind = STOP_TIME;
      else if (now() - lastCancelPoll > CANCEL_POLL_MS) {
        lastCancelPoll = now();
        if (d.select({ c: runs.cancelRequested }).from(runs).where(eq(runs.id, runId)).get()?.c) stopKind = STOP_CANCEL;
      }
      return stopKind !== STOP_NONE;
    };
    const onProgress = (pointsDone: number): void => {
      if (control.fault === "throw" && pointsDone >= 1) throw new Error("test fault: the solver threw at point 1");
    };
    const stats = new RunStats(net.devices.count);
    let batch: StoredPoint[] = [];
    let lastFlush = now();
    const flush = (): void => {
      if (batch.length === 0) return;
      const b = batch;
      batch = [];
      d.transaction((tx) => {
        insertPoints(runId, b, tx);
        tx.update(runs)
          .set({ pointsDone: stored + b.length })
          .where(eq(runs.id, runId))
          .run();
      });
      stored += b.length;
      lastFlush = now();
    };
    const onPoint = (p: PointResult): void => {
      if (control.fault === "stuck") for (const end = Date.now() + 60_000; Date.now() < end;);
      if (done === 0) d.update(runs).set({ solverReason: p.solver.reason }).where(eq(runs.id, runId)).run();
      stats.add(p);
      batch.push(toRecord(net, layout, p));
      done++;
      if (batch.length >= WRITE_BATCH || now() - lastFlush >= PROGRESS_MS) flush();
    };

    // The point's arrays are reused by the next point: toRecord copies what the batch keeps.
    const run: RunResult = solveNetwork(net, {
      onProgress,
      onPoint,
      shouldStop,
      maxPoints: row.pointsTotal,
      keepPoints: false,
      reuseArrays: true,
    });
    flush();
    d.update(runs)
      .set({
        solverReason: run.reason,
        newtonPoints: stats.newtonPoints,
        devicesNotWeak: stats.count(stats.notWeak),
        devicesNotSaturated: stats.count(stats.notSaturated),
        maxResidual: stats.maxResidual,
        warnings: JSON.stringify([...stats.warnings.values()]),
        failures: JSON.stringify(run.failures.slice(0, 50).map((f) => ({ point: f.point, message: f.message }))),
      })
      .where(eq(runs.id, runId))
      .run();
    const of = `${done.toLocaleString("en-US")} of ${row.pointsTotal.toLocaleString("en-US")} points`;
    if (stopKind === STOP_CANCEL) return end("canceled", `canceled after ${of}`, done);
    if (stopKind === STOP_TIME)
      return end("failed", `time limit of ${row.timeLimitMs / 1000} s reached after ${of}`, done);
    const structural = run.failures.find((f) => f.point < 0);
    if (structural) return end("failed", `the network cannot be solved: ${structural.message}`, done);
    if (done === 0 && run.failures.length)
      return end("failed", `no point could be solved: ${run.failures[0].message}`, done);
    const finished = end("done", null, done);
    // Review: the results diff against the parent commit's run, computed once (app/lib/review/diffs.ts); it never fails the run.
    try {
      storeCommitDiff(runId, d);
    } catch (e) {
      console.error(`run ${runId}: storing its commit diff failed: ${(e as Error).message}`);
    }
    return finished;
  } catch (e) {
    return end("failed", `the run failed: ${((e as Error).message ?? String(e)).split("\n")[0]}`, stored);
  }
}

function sleep(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/** The model figures a result page states. */
export function modelOf(net: Network): Record<string, unknown> {
  const s = net.settings;
  return {
    model: s.model,
    kappa: s.kappa,
    temp: s.temp,
    ut: s.ut,
    i0: s.i0,
    vt0: s.vt0,
    ispec: s.ispec,
    devices: net.devices.count,
    nodes: net.nodes.names.length,
  };
}

/** Run-wide validity figures; a device counts once if it is flagged at any solved point. */
class RunStats {
  readonly notWeak: Uint8Array;
  readonly notSaturated: Uint8Array;
  readonly warnings = new Map<string, RunWarning>();
  newtonPoints = 0;
  maxResidual = 0;

  constructor(devices: number) {
    this.notWeak = new Uint8Array(devices);
    this.notSaturated = new Uint8Array(devices);
  }

  add(p: PointResult): void {
    if (p.solver.method === "newton") this.newtonPoints++;
    if (Number.isFinite(p.solver.residual) && p.solver.residual > this.maxResidual)
      this.maxResidual = p.solver.residual;
    if (p.ok) {
      const m = this.notWeak.length;
      for (let k = 0; k < m; k++) {
        if (p.ic[k] > WEAK_INVERSION_LIMIT) this.notWeak[k] = 1;
        if (!p.saturated[k]) this.notSaturated[k] = 1;
      }
    }
    for (const w of p.warnings) {
      const key = `${w.kind}:${w.device}`;
      const have = this.warnings.get(key);
      if (have) have.points++;
      else if (this.warnings.size < 50)
        this.warnings.set(key, { kind: w.kind, message: w.message, points: 1, firstPoint: p.index });
    }
  }

  count(flags: Uint8Array): number {
    let n = 0;
    for (let k = 0; k < flags.length; k++) n += flags[k];
    return n;
  }
}

function toRecord(net: Network, layout: RunLayout, p: PointResult): StoredPoint {
  const paramNames = layout.params;
  const params = new Float64Array(paramNames.length);
  for (let j = 0; j < paramNames.length; j++) {
    const v = p.params[paramNames[j]];
    params[j] =
      v ??
      (paramNames[j] === "temp" ? net.settings.temp : (net.params.find((x) => x.name === paramNames[j])?.value ?? NaN));
  }
  const probes = new Float64Array(layout.probes.length);
  for (let j = 0; j < probes.length; j++) probes[j] = p.probes[layout.probes[j]] ?? NaN;
  const rails = new Float64Array(net.rails.length);
  for (let j = 0; j < rails.length; j++) rails[j] = p.railCurrents[net.rails[j].node];
  return {
    point: p.index,
    sample: p.sample ?? 0,
    params,
    probes,
    method: p.solver.method,
    iterations: p.solver.iterations,
    residual: p.solver.residual,
    error: p.ok ? null : (p.error ?? "not solved"),
    rails,
    nodes: p.voltages.slice(),
    current: p.currents.slice(),
    ic: Float32Array.from(p.ic),
    saturated: p.saturated.slice(),
  };
}
