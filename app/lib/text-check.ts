/**
 * What the server needs to know about a network text before it stores a
 * commit or queues a run: its diagnostics, whether it elaborates, and the size
 * of a run of it. Pure (no I/O): computed in the interactive worker
 * (./interactive-worker.ts), or inline where no pool is wanted (seed, tests).
 */
import type { CommitDiagnostic } from "@/db/schema";
import { elaborate } from "@/src/lang/index";
import { pointCount } from "@/src/solver/index";
import { valuesPerPoint } from "./results";
import { planRun } from "./run-plan";
import type { ChunkRange } from "./run-chunk";
import { type StoredLayout, storedLayout } from "./run-layouts";

/** The largest names text a run plan carries to the request thread (1 MB: about 40,000 devices). */
export const PLAN_LAYOUT_BYTES = 1024 * 1024;

export interface TextCheck {
  /** No diagnostic is an error. */
  ok: boolean;
  diagnostics: CommitDiagnostic[];
  /** The size of a run of every analysis; null when the text does not elaborate to a network. */
  run: { points: number; valuesPerPoint: number } | null;
}

export function checkNetworkText(text: string): TextCheck {
  const result = elaborate(text);
  return {
    ok: result.ok,
    diagnostics: result.diagnostics.map((x) => ({
      severity: x.severity,
      line: x.line,
      column: x.column,
      message: x.message,
    })),
    run: result.network ? { points: pointCount(result.network), valuesPerPoint: valuesPerPoint(result.network) } : null,
  };
}

/**
 * A run's plan (app/lib/run-plan.ts) with its layout already as the texts run_layouts stores; without them when the
 * names are larger than PLAN_LAYOUT_BYTES (the run's first chunk writes them then, in the run worker: writing tens of
 * megabytes would hold the request thread for a second).
 */
export interface PlanText {
  points: number;
  valuesPerPoint: number;
  layout: StoredLayout | null;
  model: Record<string, unknown>;
  chunks: ChunkRange[];
}

/**
 * The plan of a run of `text` for `workers` workers; null when the text does not elaborate to a network.
 * `extraPointMs`: see planRun.
 */
export function planNetworkText(text: string, workers: number, extraPointMs = 0): PlanText | null {
  const result = elaborate(text);
  if (!result.network) return null;
  const plan = planRun(result.network, workers, extraPointMs);
  const stored = storedLayout(plan.layout);
  return {
    points: plan.points,
    valuesPerPoint: plan.valuesPerPoint,
    layout: stored.names.length <= PLAN_LAYOUT_BYTES ? stored : null,
    model: plan.model,
    chunks: plan.chunks,
  };
}
