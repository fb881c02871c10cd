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
