import type { CommitBadge, ReviewState } from "@/app/lib/review/diffs";
import type { ExpectationBadge } from "@/app/lib/review/expectation-status";
import { ExpectationStatus } from "@/app/ui/expectation-status";

/**
 * Review states as small stamps: a glyph, the words in small capitals, and a
 * rule on the left whose weight says how settled the commit is (dotted while
 * it awaits sign-off, solid once a reviewer has spoken).
 */
export const REVIEW_WORDS: Record<ReviewState, { glyph: string; label: string; style: string }> = {
  open: { glyph: "○", label: "awaiting sign-off", style: "border-dotted border-stone-400 text-stone-600" },
  rework: { glyph: "↺", label: "back for rework", style: "border-solid border-ochre-500 bg-ochre-50 text-ochre-700" },
  signed_off: { glyph: "✓", label: "signed off", style: "border-solid border-moss-600 bg-moss-50 text-moss-700" },
};

/** A commit's review state as a small stamp. */
export function ReviewStateBadge({ state }: { state: ReviewState }) {
  const r = REVIEW_WORDS[state];
  return (
    <span
      data-review={state}
      className={`inline-flex items-baseline gap-1 border-l-[3px] px-1.5 py-px text-[11px] font-medium uppercase tracking-wider ${r.style}`}
    >
      <span aria-hidden>{r.glyph}</span>
      {r.label}
    </span>
  );
}

/** "N values moved" from the stored diffs of a commit's runs against its parent's. */
export function MovedBadge({ diffs }: { diffs: CommitBadge["diffs"] }) {
  if (diffs.length === 0) return null;
  return (
    <>
      {diffs.map((d) => {
        const title =
          d.note ??
          (d.beyond
            ? `${d.analysis}: ${d.names.join(", ")}${d.beyond > d.names.length ? ", …" : ""}`
            : `${d.analysis}: every value within tolerance`);
        const style =
          d.compared === 0
            ? "border-stone-300 text-stone-500"
            : d.beyond > 0
              ? "border-amber-500 bg-amber-50 text-amber-800"
              : "border-moss-500 text-moss-700";
        return (
          <span
            key={d.runId}
            title={title}
            data-moved={d.beyond}
            className={`inline-block rounded border px-1.5 py-0.5 text-xs ${style}`}
          >
            {d.compared === 0
              ? "no base run"
              : `${d.beyond.toLocaleString("en-US")} ${d.beyond === 1 ? "value" : "values"} moved`}
            {d.beyond > 0 && d.names.length ? (
              <span className="ml-1 font-mono">
                ({d.names.slice(0, 3).join(", ")}
                {d.names.length > 3 ? ", …" : ""})
              </span>
            ) : null}
          </span>
        );
      })}
    </>
  );
}

/** A commit's (or network's, or run's) expectations: all pass, n failing, not run, or no checks. */
export function ExpectationBadgeView({ badge }: { badge: ExpectationBadge | undefined }) {
  if (!badge) return null;
  if (badge.status === "none")
    return (
      <span
        data-slot="expectation-status"
        data-status="none"
        className="inline-block px-1.5 py-0.5 text-xs text-stone-500"
        title="The network states no expectations"
      >
        no checks
      </span>
    );
  return <ExpectationStatus failing={badge.status === "not-run" ? null : badge.failing} count={badge.count || null} />;
}

/** The badges of a commit, for history rows. */
export function CommitReviewBadges({ badge }: { badge: CommitBadge | undefined }) {
  if (!badge) return null;
  return (
    <span className="inline-flex flex-wrap items-center gap-1">
      <ReviewStateBadge state={badge.review} />
      <ExpectationBadgeView badge={badge.expectations} />
      <MovedBadge diffs={badge.diffs} />
    </span>
  );
}
