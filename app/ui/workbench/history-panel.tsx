"use client";

import type { CommitSummary } from "@/app/lib/networks";
import { HistoryReview } from "./history-review";

/** The network's commits, newest first, with their review badges; choosing one opens it; each links to its review. */

export function HistoryPanel({
  commits,
  headId,
  selectedId,
  onOpen,
  reviewHref,
}: {
  commits: CommitSummary[];
  headId: string | null;
  selectedId: string | null;
  onOpen(id: string): void;
  /** Where a commit's review starts (its compare page, review block at the top). */
  reviewHref?(id: string): string;
}) {
  return (
    <section aria-labelledby="history-heading" className="space-y-2">
      <h2 id="history-heading" className="text-sm font-semibold">
        History
      </h2>
      {commits.length === 0 ? (
        <p className="text-sm text-stone-500">No commits yet.</p>
      ) : (
        <ol
          aria-label="Commits"
          className="max-h-80 divide-y divide-stone-100 overflow-auto rounded border border-stone-200 bg-white"
        >
          {commits.map((c) => (
            <li key={c.id}>
              <button
                type="button"
                onClick={() => onOpen(c.id)}
                aria-current={c.id === selectedId ? "true" : undefined}
                className={`block w-full px-3 py-2 text-left text-sm hover:bg-moss-50 ${c.id === selectedId ? "bg-moss-50" : ""}`}
              >
                <span className="flex items-baseline justify-between gap-2">
                  <span className="truncate">{c.message}</span>
                  <span className="font-mono text-xs text-stone-500">{c.id.slice(0, 8)}</span>
                </span>
                <span className="flex items-baseline justify-between gap-2 text-xs text-stone-500">
                  <span>
                    {c.authorName} ·{" "}
                    {new Date(c.createdAt).toLocaleString("en-GB", { dateStyle: "short", timeStyle: "short" })}
                  </span>
                  <span>
                    {c.id === headId ? (
                      <span className="mr-1 rounded bg-moss-100 px-1 text-moss-700">newest</span>
                    ) : null}
                    {c.ok ? null : <span className="text-ember-500">{c.errorCount} error(s)</span>}
                  </span>
                </span>
                <HistoryReview commitId={c.id} />
              </button>
              {reviewHref ? (
                <a
                  href={reviewHref(c.id)}
                  data-review-link={c.id}
                  className="block px-3 pb-1.5 text-right text-xs text-moss-700 hover:underline"
                >
                  review this commit ›
                </a>
              ) : null}
            </li>
          ))}
        </ol>
      )}
    </section>
  );
}
