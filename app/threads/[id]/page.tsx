import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { found, threadAccess } from "@/app/lib/access";
import { listCommits } from "@/app/lib/networks";
import { pageAccess } from "@/app/lib/pages";
import { roleAllows } from "@/app/lib/policy";
import { getThread, memberHandles } from "@/app/lib/review/threads";
import { runsOfCommit } from "@/app/lib/review/run-tables";
import { ReviewStateBadge } from "@/app/ui/review/badges";
import { CommentBody, RunCard } from "@/app/ui/review/comment-body";
import { CommentForm } from "@/app/ui/review/comment-form";
import { VerdictPanel } from "@/app/ui/review/verdict-panel";
import { myVerdicts, signOffSummaries } from "@/app/lib/review/sign-off";

export const dynamic = "force-dynamic";
type Props = { params: Promise<{ id: string }> };

export const metadata: Metadata = { title: "Thread" };

const VERDICT_TEXT = {
  signed_off: "signed the commit off",
  rework: "sent the commit back for rework",
  withdrawn: "withdrew their verdict",
} as const;

/** /threads/[id]: a review thread's permalink. A non-member (or an unknown id) gets 404. */
export default async function ThreadPage({ params }: Props) {
  const { id } = await params;
  const { role, t, userId } = await pageAccess(`/threads/${id}`, (actor) => {
    const { role, thread, actor: a } = threadAccess(actor, "workspace.read", id);
    return { role, t: found(getThread(thread.id)), userId: a.userId };
  });
  const netPath = `/w/${t.workspace.slug}/n/${t.network.slug}`;
  const runs = runsOfCommit(t.commit.id).map((r) => ({
    id: r.id,
    label: `${r.id.slice(0, 10)} · ${r.analysis ?? "not started"} · ${r.state}`,
  }));
  // A verdict may be about the thread's commit or a later one (the fix a reply links); default: the newest linked one.
  const history = listCommits(t.network.id);
  const threadCommitAt = history.findIndex((c) => c.id === t.commit.id);
  const eligible = history
    .slice(0, threadCommitAt + 1)
    .map((c) => ({ id: c.id, label: `${c.id.slice(0, 10)} ${c.message.slice(0, 40)}` }));
  const linked = new Set(t.runCards.filter((c) => c.found).map((c) => c.commitId));
  const defaultCommitId = eligible.find((c) => linked.has(c.id))?.id ?? t.commit.id;
  const pinned = t.thread.runId ? t.runCards.find((c) => c.id === t.thread.runId) : undefined;
  return (
    <div className="space-y-6">
      <nav className="text-sm text-stone-600" aria-label="Breadcrumb">
        <HoverLink href={`/w/${t.workspace.slug}`} className="hover:underline">
          {t.workspace.name}
        </HoverLink>{" "}
        /{" "}
        <HoverLink href={netPath} className="hover:underline">
          {t.network.name}
        </HoverLink>{" "}
        / thread
      </nav>
      <header className="space-y-2 border-b border-stone-200 pb-4">
        <h1 className="text-2xl font-semibold">{t.thread.title}</h1>
        <p className="flex flex-wrap items-center gap-2 text-sm text-stone-600">
          <span>
            on commit <span className="font-mono">{t.commit.id.slice(0, 10)}</span> “{t.commit.message}” by{" "}
            {t.commit.authorName}
          </span>
          <ReviewStateBadge state={t.review} />
          {t.commit.parentId ? (
            <HoverLink
              href={`${netPath}/compare?from=${t.commit.parentId}&to=${t.commit.id}`}
              className="text-moss-700 hover:underline"
            >
              Compare with parent
            </HoverLink>
          ) : null}
        </p>
        {t.commitStates.length > 1 ? (
          <ul className="flex flex-wrap gap-3 text-xs text-stone-600" aria-label="Commits reviewed in this thread">
            {t.commitStates.map((c) => (
              <li key={c.commitId} className="flex items-center gap-1">
                <span className="font-mono">{c.commitId.slice(0, 10)}</span> “{c.message}”{" "}
                <ReviewStateBadge state={c.review} />
                {c.commitId !== t.commit.id ? (
                  <HoverLink
                    href={`${netPath}/compare?from=${t.commit.id}&to=${c.commitId}`}
                    className="text-moss-700 hover:underline"
                  >
                    Compare {t.commit.id.slice(0, 10)} → {c.commitId.slice(0, 10)}
                  </HoverLink>
                ) : null}
              </li>
            ))}
          </ul>
        ) : null}
        {t.verdicts.length ? (
          <ul className="text-xs text-stone-600" aria-label="Verdicts">
            {t.verdicts.map((v) => (
              <li key={v.reviewerName}>
                {v.reviewerName} {VERDICT_TEXT[v.verdict]} (
                {new Date(v.at).toISOString().slice(0, 16).replace("T", " ")} UTC)
              </li>
            ))}
          </ul>
        ) : null}
        {pinned ? (
          <div className="text-sm">
            Pinned run: <RunCard card={pinned} />
          </div>
        ) : null}
      </header>
      <ol className="space-y-4" aria-label="Comments">
        {t.comments.map((c) => (
          <li key={c.id} id={c.id} className="rounded border border-stone-200 bg-white p-3 shadow-sm">
            <p className="mb-2 flex flex-wrap items-center gap-2 text-xs text-stone-500">
              <span className="font-medium text-stone-700">{c.authorName}</span>
              <a href={`#${c.id}`} className="hover:underline">
                {new Date(c.createdAt).toISOString().slice(0, 16).replace("T", " ")} UTC
              </a>
              {c.verdict === "withdrawn" ? (
                <span data-review="withdrawn" className="text-[11px] uppercase tracking-wider text-stone-500">
                  verdict withdrawn
                </span>
              ) : c.verdict ? (
                <ReviewStateBadge state={c.verdict} />
              ) : null}
              {c.verdict && c.verdictCommitId && c.verdictCommitId !== t.commit.id ? (
                <span>
                  on commit <span className="font-mono">{c.verdictCommitId.slice(0, 10)}</span>
                </span>
              ) : null}
            </p>
            {c.signedOffFailing ? (
              <p data-testid="signed-off-failing" className="mb-2 text-xs font-medium text-ember-500">
                Signed off although the newest run failed {c.signedOffFailing.join(", ")}. The reason given:
              </p>
            ) : null}
            {c.body ? (
              <CommentBody html={c.html} cards={t.runCards} />
            ) : (
              <p className="text-sm italic text-stone-500">{VERDICT_TEXT[c.verdict!]}</p>
            )}
          </li>
        ))}
      </ol>
      {roleAllows(role, "commit.signoff") ? (
        <VerdictPanel
          threadId={t.thread.id}
          commits={eligible}
          defaultCommitId={defaultCommitId}
          summaries={signOffSummaries(eligible.map((c) => c.id))}
          mine={myVerdicts(
            userId,
            eligible.map((c) => c.id),
          )}
        />
      ) : null}
      {roleAllows(role, "thread.comment") ? (
        <CommentForm
          threadId={t.thread.id}
          runs={runs}
          members={memberHandles(t.workspace.id).map(({ handle, name }) => ({ handle, name }))}
        />
      ) : (
        <p className="text-sm text-stone-500">As a {role} you can read this thread but not reply.</p>
      )}
    </div>
  );
}
