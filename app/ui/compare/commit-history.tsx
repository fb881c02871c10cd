/** The network's commits, newest first, with review badges and a link comparing each with its parent. */
import { HoverLink } from "@/app/ui/hover-link";
import type { CommitSummary } from "@/app/lib/networks";
import type { CommitBadge } from "@/app/lib/review/diffs";
import { CommitReviewBadges } from "@/app/ui/review/badges";
import { CompareSection } from "./compare-section";

export interface CommitHistoryProps {
  history: CommitSummary[];
  badges: Map<string, CommitBadge>;
  /** The compare page's path (the parent links add ?from=…&to=…). */
  comparePath: string;
}

export function CommitHistory({ history, badges, comparePath }: CommitHistoryProps) {
  return (
    <CompareSection id="history" title="History">
      <ol className="divide-y divide-stone-200 rounded border border-stone-300 bg-white text-sm" aria-label="History">
        {history.map((c) => (
          <li key={c.id} className="flex flex-wrap items-center gap-2 px-3 py-2" data-commit={c.id}>
            <span className="font-mono text-xs">{c.id.slice(0, 10)}</span>
            <span className="flex-1">
              {c.message} <span className="text-stone-500">· {c.authorName}</span>
            </span>
            <CommitReviewBadges badge={badges.get(c.id)} />
            {c.parentId ? (
              <HoverLink
                href={`${comparePath}?from=${c.parentId}&to=${c.id}`}
                className="text-xs text-moss-700 hover:underline"
              >
                compare with parent
              </HoverLink>
            ) : null}
          </li>
        ))}
      </ol>
    </CompareSection>
  );
}
