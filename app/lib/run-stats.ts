/**
 * Run-wide figures built from chunks: each chunk of a run collects its own
 * (ChunkStats and two per-device bit sets); the run's figures are merged from
 * every chunk once all are in, in chunk order, so they do not depend on how
 * the run was split.
 *
 * Contracts
 * - Merging the chunks of any split of a run gives the figures the whole run
 *   as one chunk gives, as long as no chunk meets more than WARNING_KEYS
 *   distinct warnings (kind × first device); past that a chunk counts only
 *   the keys it met first.
 * - Pure: used by the local pool's threads, queue workers and the app.
 */
import { WEAK_INVERSION_IC } from "@/src/lang/vocabulary";
import type { PointResult } from "@/src/solver/results";
import type { RunWarning } from "@/db/schema";

/** Warnings and failures a run keeps (the run page lists them). */
export const RUN_WARNINGS_KEPT = 50;
export const RUN_FAILURES_KEPT = 50;
/** Distinct warnings a chunk counts (see the module comment). */
export const WARNING_KEYS = 10_000;

export type { RunWarning };

export interface PointFailure {
  point: number;
  message: string;
}

/** What a chunk reports besides its points (JSON in run_chunks.stats and in a queue worker's post). */
export interface ChunkStats {
  /** Points the chunk solved (failed points included). */
  points: number;
  newtonPoints: number;
  /** Largest finite KCL residual, amperes (0 when none). */
  maxResidual: number;
  /** The solver's reason for its method, from the chunk's first point. */
  solverReason: string | null;
  /** Distinct warnings in order of first occurrence, keyed `kind:device`. */
  warnings: (RunWarning & { key: string })[];
  /** The first RUN_FAILURES_KEPT failed points, in point order. */
  failures: PointFailure[];
  failureCount: number;
  /** A failure of the run as a whole (the network cannot be solved at all), or null. */
  structural: string | null;
}

/** Collects a chunk's figures point by point. */
/** A chunk's figures before it has solved a point. */
export function emptyChunkStats(): ChunkStats {
  return {
    points: 0,
    newtonPoints: 0,
    maxResidual: 0,
    solverReason: null,
    warnings: [],
    failures: [],
    failureCount: 0,
    structural: null,
  };
}

export class ChunkCollector {
  /** Bit k of the first half: device k outside weak inversion at some solved point; second half: not saturated. */
  readonly flags: Uint8Array;
  private readonly half: number;
  private readonly warnings = new Map<string, RunWarning & { key: string }>();
  readonly stats: ChunkStats = emptyChunkStats();

  constructor(private readonly devices: number) {
    this.half = flagBytes(devices);
    this.flags = new Uint8Array(2 * this.half);
  }

  /** Adds a point; `error` is the point's failure as stored (null for a solved point). */
  add(p: PointResult, error: string | null): void {
    const s = this.stats;
    if (s.points === 0) s.solverReason = p.solver.reason;
    s.points++;
    if (p.solver.method === "newton") s.newtonPoints++;
    if (Number.isFinite(p.solver.residual) && p.solver.residual > s.maxResidual) s.maxResidual = p.solver.residual;
    if (error === null) {
      markFlags(this.flags, this.half, this.devices, p.ic, p.saturated);
      for (const w of p.warnings) {
        const key = `${w.kind}:${w.device}`;
        const have = this.warnings.get(key);
        if (have) have.points++;
        else if (this.warnings.size < WARNING_KEYS)
          this.warnings.set(key, { key, kind: w.kind, message: w.message, points: 1, firstPoint: p.index });
      }
    } else {
      s.failureCount++;
      if (s.failures.length < RUN_FAILURES_KEPT) s.failures.push({ point: p.index, message: error });
    }
  }

  /** Records a failure of the whole run (point < 0 in the solver's failures). */
  refuse(message: string): void {
    this.stats.structural ??= message;
  }

  finish(): ChunkStats {
    this.stats.warnings = [...this.warnings.values()];
    return this.stats;
  }
}

/** Bytes of one bit set over `devices` devices. */
export function flagBytes(devices: number): number {
  return (devices + 7) >> 3;
}

function markFlags(flags: Uint8Array, half: number, m: number, ic: ArrayLike<number>, saturated: ArrayLike<number>) {
  for (let k = 0; k < m; k++) {
    if (ic[k] > WEAK_INVERSION_IC) flags[k >> 3] |= 1 << (k & 7);
    if (!saturated[k]) flags[half + (k >> 3)] |= 1 << (k & 7);
  }
}

/** The run's figures, as the runs table stores them. */
export interface RunFigures {
  points: number;
  newtonPoints: number;
  devicesNotWeak: number;
  devicesNotSaturated: number;
  maxResidual: number;
  solverReason: string | null;
  warnings: RunWarning[];
  failures: PointFailure[];
  failureCount: number;
  structural: string | null;
}

/**
 * Merges chunk figures given in chunk order (see the module comment). `saturationCovered` (one bit per device):
 * devices whose saturation an expectation governs, left out of `devicesNotSaturated` (the expectation reports them).
 */
export function mergeChunks(
  chunks: readonly { stats: ChunkStats; flags: Uint8Array | null }[],
  devices: number,
  saturationCovered: Uint8Array | null = null,
) {
  const half = flagBytes(devices);
  const flags = new Uint8Array(2 * half);
  const warnings = new Map<string, RunWarning>();
  const out: RunFigures = { ...emptyChunkStats(), devicesNotWeak: 0, devicesNotSaturated: 0 };
  for (const { stats, flags: f } of chunks) {
    if (out.solverReason === null && stats.points > 0) out.solverReason = stats.solverReason;
    out.points += stats.points;
    out.newtonPoints += stats.newtonPoints;
    out.maxResidual = Math.max(out.maxResidual, stats.maxResidual);
    out.failureCount += stats.failureCount;
    out.structural ??= stats.structural;
    for (const x of stats.failures) if (out.failures.length < RUN_FAILURES_KEPT) out.failures.push(x);
    for (const w of stats.warnings) {
      const have = warnings.get(w.key);
      if (have) have.points += w.points;
      else if (warnings.size < RUN_WARNINGS_KEPT)
        warnings.set(w.key, { kind: w.kind, message: w.message, points: w.points, firstPoint: w.firstPoint });
    }
    if (f && f.length === flags.length) for (let i = 0; i < f.length; i++) flags[i] |= f[i];
  }
  out.warnings = [...warnings.values()];
  out.devicesNotWeak = countBits(flags.subarray(0, half));
  const notSaturated = flags.subarray(half);
  if (saturationCovered) for (let i = 0; i < half; i++) notSaturated[i] &= ~saturationCovered[i];
  out.devicesNotSaturated = countBits(notSaturated);
  return out;
}

function countBits(a: Uint8Array): number {
  let n = 0;
  for (let i = 0; i < a.length; i++) {
    let b = a[i];
    while (b) {
      b &= b - 1;
      n++;
    }
  }
  return n;
}
