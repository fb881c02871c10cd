/**
 * The review region of a network page (server component): threads, the
 * history's review state and moved values, a link to compare, and the
 * measurements panel.
 */
import { HoverLink } from "@/app/ui/hover-link";
import { listCommits } from "@/app/lib/networks";
import { commitBadges } from "@/app/lib/review/diffs";
import { runsOfCommit } from "@/app/lib/review/run-tables";
import { listThreads } from "@/app/lib/review/threads";
import { CommitReviewBadges } from "./badges";
import { MeasurementPanel } from "./measurement-panel";

export function ReviewPanel({
  workspaceSlug,
  network,
  canMeasure,
}: {
  workspaceSlug: string;
  network: { id: string; slug: string };
  canMeasure: boolean;
}) {
  const commits = listCommits(network.id);
  const badges = commitBadges(commits.map((c) => c.id));
  const threads = listThreads({ networkId: network.id });
  const short = (id: string) => id.slice(0, 10);
  const message = new Map(commits.map((c) => [c.id, c.message]));
  const runs = commits.slice(0, 10).flatMap((c) =>
    runsOfCommit(c.id)
      .filter((r) => r.state === "done")
      .map((r) => ({ id: r.id, label: `${short(r.id)} · ${r.analysis} · ${c.message.slice(0, 30)}` })),
  );
  const compare = `/w/${workspaceSlug}/n/${network.slug}/compare`;
  return (
    <div className="space-y-6 border-t border-stone-200 pt-6">
      <section aria-labelledby="review-heading" className="space-y-2">
        <div className="flex items-baseline gap-4">
          <h2 id="review-heading" className="text-lg font-semibold">
            Review
          </h2>
          {commits.length > 1 ? (
            <HoverLink href={compare} className="text-sm text-moss-700 hover:underline">
              Compare commits
            </HoverLink>
          ) : null}
        </div>
        {threads.length ? (
          <ul className="space-y-1 text-sm" aria-label="Threads">
            {threads.map((t) => (
              <li key={t.id} className="flex flex-wrap items-center gap-2">
                <HoverLink href={`/threads/${t.id}`} className="text-moss-700 hover:underline">
                  {t.title}
                </HoverLink>
                <span className="text-stone-500">
                  on {short(t.commitId)} “{message.get(t.commitId)}”, by {t.authorName}
                </span>
                <CommitReviewBadges badge={badges.get(t.commitId)} />
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-stone-500">No review threads yet; open one from the compare page.</p>
        )}
        <ol
          className="divide-y divide-stone-200 rounded border border-stone-300 bg-white text-sm"
          aria-label="Review history"
        >
          {commits.map((c) => (
            <li key={c.id} className="flex flex-wrap items-center gap-2 px-3 py-1.5" data-commit={c.id}>
              <span className="font-mono text-xs">{short(c.id)}</span>
              <span className="flex-1 truncate">{c.message}</span>
              <CommitReviewBadges badge={badges.get(c.id)} />
              {c.parentId ? (
                <HoverLink
                  href={`${compare}?from=${c.parentId}&to=${c.id}`}
                  className="text-xs text-moss-700 hover:underline"
                >
                  diff
                </HoverLink>
              ) : null}
            </li>
          ))}
        </ol>
      </section>
      <MeasurementPanel
        networkId={network.id}
        runs={runs}
        commits={commits.map((c) => ({ id: c.id, label: `${short(c.id)} ${c.message.slice(0, 40)}` }))}
        canWrite={canMeasure}
      />
    </div>
  );
}
