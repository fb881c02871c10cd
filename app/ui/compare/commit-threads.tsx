/**
 * The review block at the top of the compare page: the newer commit's review
 * state, its threads, and (for those who may comment) the form that opens a
 * thread, behind a toggle so the comparison stays in view.
 */
import { HoverLink } from "@/app/ui/hover-link";
import type { ReviewState } from "@/app/lib/review/diffs";
import { ReviewStateBadge } from "@/app/ui/review/badges";
import { NewThreadForm } from "@/app/ui/review/comment-form";

export interface CommitThreadsProps {
  commitId: string;
  message: string;
  review: ReviewState;
  threads: { id: string; title: string; authorName: string }[];
  /** The commit's runs a new thread may link to. */
  runs: { id: string; label: string }[];
  canComment: boolean;
  /** Members who may be mentioned (handle and name), for the form's completion. */
  members?: { handle: string; name: string }[];
  /** Open the new-thread form at once (the history's "review this commit" link). */
  startOpen?: boolean;
}

export function CommitThreads({
  commitId,
  message,
  review,
  threads,
  runs,
  canComment,
  members,
  startOpen = false,
}: CommitThreadsProps) {
  return (
    <section id="review" aria-labelledby="threads" className="space-y-2 rounded border border-stone-300 bg-white p-3">
      <div className="flex flex-wrap items-baseline gap-3">
        <h2 id="threads" className="text-lg font-semibold">
          Review of <span className="font-mono">{commitId.slice(0, 10)}</span>
        </h2>
        <span className="truncate text-sm text-stone-600">“{message}”</span>
        <ReviewStateBadge state={review} />
      </div>
      {threads.length ? (
        <ul className="space-y-1 text-sm">
          {threads.map((t) => (
            <li key={t.id}>
              <HoverLink href={`/threads/${t.id}`} className="text-moss-700 hover:underline">
                {t.title}
              </HoverLink>{" "}
              <span className="text-stone-500">by {t.authorName}</span>
            </li>
          ))}
        </ul>
      ) : (
        <p className="text-sm text-stone-500">No threads on this commit yet.</p>
      )}
      {canComment ? (
        <details className="group" open={startOpen}>
          <summary className="cursor-pointer text-sm text-moss-700 hover:underline">
            Start a thread on this commit
          </summary>
          <div className="pt-2">
            <NewThreadForm commitId={commitId} runs={runs} members={members} />
          </div>
        </details>
      ) : null}
    </section>
  );
}
