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
