/**
 * A commit's or run's expectations in one word, wherever it is listed (history, workspace list, compare page,
 * thread run cards, run page): all pass, n failing, or not run. `failing` null with a count means not evaluated.
 */
export function ExpectationStatus({
  failing,
  count,
  notRun = false,
}: {
  /** Expectations failing in the newest finished run; null when none has finished. */
  failing: number | null;
  /** How many the network states (0: it states none, nothing is shown). */
  count?: number | null;
  notRun?: boolean;
}) {
  if (count === 0) return null;
  if (notRun || failing === null)
    return (
      <span
        data-slot="expectation-status"
        data-status="not-run"
        className="inline-block rounded border border-stone-300 px-1.5 py-0.5 text-xs text-stone-500"
        title="No finished run of this commit has checked its expectations"
      >
        expectations not run
      </span>
    );
  if (failing === 0)
    return (
      <span
        data-slot="expectation-status"
        data-status="pass"
        className="inline-block rounded border border-moss-600 bg-moss-50 px-1.5 py-0.5 text-xs font-medium text-moss-700"
      >
        {count ? `all ${count} pass` : "all pass"}
      </span>
    );
  return (
    <span
      data-slot="expectation-status"
      data-status="fail"
      className="inline-block rounded border border-ember-500 bg-ember-50 px-1.5 py-0.5 text-xs font-medium text-ember-500"
    >
      {failing} failing
    </span>
  );
}
