import type { RunState } from "@/db/work-schema";

const STYLE: Record<RunState, string> = {
  queued: "border-stone-300 bg-stone-100 text-stone-700",
  running: "border-moss-500 bg-moss-50 text-moss-700",
  done: "border-moss-600 bg-moss-600 text-white",
  failed: "border-ember-500 bg-ember-50 text-ember-500",
  canceled: "border-stone-300 bg-white text-stone-500",
  interrupted: "border-amber-500 bg-amber-50 text-amber-700",
};

/** A run's state as a small label. */
export function RunStateBadge({ state }: { state: RunState }) {
  return (
    <span
      data-state={state}
      className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium ${STYLE[state]}`}
    >
      {state}
    </span>
  );
}

/** Points done of total as a bar with its numbers; `label` names it for assistive technology. */
export function ProgressBar({ done, total, label = "Run progress" }: { done: number; total: number; label?: string }) {
  const pct = total > 0 ? Math.min(100, (100 * done) / total) : 0;
  return (
    <div className="flex items-center gap-2">
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={total}
        aria-valuenow={done}
        className="h-2 w-full min-w-24 overflow-hidden rounded bg-stone-200"
      >
        <div className="h-full bg-moss-500 transition-[width] duration-300" style={{ width: `${pct}%` }} />
      </div>
      <span className="tabular shrink-0 text-xs text-stone-600">
        {done.toLocaleString("en-US")} / {total.toLocaleString("en-US")}
      </span>
    </div>
  );
}

/** The model caution every result page shows (PRODUCT.md's safety note). */
export function ModelCaution() {
  return (
    <p role="note" className="rounded border border-amber-300 bg-amber-50 px-3 py-2 text-sm text-amber-900">
      <strong>Results are model estimates.</strong> Runnel states its model and its limits below; silicon must be
      verified by measurement, and a foundry&apos;s models and design rules take precedence over Runnel&apos;s defaults.
    </p>
  );
}
