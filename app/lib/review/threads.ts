/**
 * Review threads on a commit: comments (Markdown, rendered safely on read),
 * run cards, mentions that notify members by e-mail, and verdicts.
 *
 * Contracts
 * - Functions take already-authorised arguments; `addComment` with a verdict
 *   must only be called after `authorize(actor, "commit.signoff", ws)`.
 * - A mention `@handle` names a member by the local part of their e-mail
 *   address (lower case): `@ruth` for ruth@larkspur.example. Each mentioned
 *   member other than the author gets exactly one message per comment,
 *   whatever the number of times they are mentioned in it; a handle that is
 *   no member of the workspace notifies nobody.
 * - A run card shows a run only when it belongs to the thread's workspace;
 *   any other id is shown as "not found" (nothing leaks).
 */
import { and, asc, desc, eq, inArray } from "drizzle-orm";
import { db } from "@/db";
import {
  comments,
  commits,
  memberships,
  networks,
  reviews,
  runs,
  threads,
  users,
  type ReviewEntry,
  type Verdict,
} from "@/db/schema";
import { clip, notify as notifyInbox, type NewNotification } from "../inbox";
import { RequestError } from "../http";
import { publicBaseUrl } from "../request-edge";
import type { Q } from "@/db";
import { newId } from "@/db/ids";
import { commitBadges, type ReviewState } from "./diffs";
import { extractMentions, extractRunRefs, renderComment, type RenderContext } from "./markdown";
import { keyProbes } from "./run-tables";
import { signOffReasonError, signOffSummaries } from "./sign-off";
import { runExpectationBadge, type ExpectationBadge } from "./expectation-status";
import { layoutHeads } from "../run-layouts";
import { isLive } from "@/db/run-states";
import { immediate } from "../db-busy";

export const MAX_COMMENT_LENGTH = 20_000;
export const MAX_TITLE_LENGTH = 200;

/** What sends a notification (app/lib/mail.ts `sendMail` in the app; a recorder in tests). */
export type Notify = (mail: { to: string; subject: string; text: string; html?: string }) => Promise<unknown>;

/** The handle of a member: the local part of their address, lower case. */
export function handleOf(email: string): string {
  return email.split("@")[0].toLowerCase();
}

function checkBody(body: string, verdict: ReviewEntry | null): string {
  const b = body.replace(/\r\n/g, "\n").trim();
  if (b.length > MAX_COMMENT_LENGTH)
    throw new RequestError(400, `body: at most ${MAX_COMMENT_LENGTH} characters (this one has ${b.length})`);
  if (b.length === 0 && !verdict) throw new RequestError(400, "body: write a comment");
  return b;
}

export interface ThreadRef {
  id: string;
  workspaceId: string;
  networkId: string;
  commitId: string;
  runId: string | null;
  title: string;
}

export function getThreadRef(id: string, d: Q = db()): ThreadRef | null {
  return (
    d
      .select({
        id: threads.id,
        workspaceId: threads.workspaceId,
        networkId: threads.networkId,
        commitId: threads.commitId,
        runId: threads.runId,
        title: threads.title,
      })
      .from(threads)
      .where(eq(threads.id, id))
      .get() ?? null
  );
}

/**
 * Opens a thread on a commit (optionally pinned to a run of it) with its first
 * comment. 404 for an unknown commit, 422 for a run of another commit.
 */
export async function createThread(
  input: { commitId: string; runId?: string | null; title: string; body: string; authorId: string; baseUrl?: string },
  notify: Notify,
  d: Q = db(),
): Promise<{ thread: ThreadRef; commentId: string; notified: string[] }> {
  const title = input.title.trim();
  if (title.length === 0) throw new RequestError(400, "title: give the thread a title");
  if (title.length > MAX_TITLE_LENGTH) throw new RequestError(400, `title: at most ${MAX_TITLE_LENGTH} characters`);
  const body = checkBody(input.body, null);
  const commit = d
    .select({ id: commits.id, networkId: commits.networkId, workspaceId: networks.workspaceId })
    .from(commits)
    .innerJoin(networks, eq(networks.id, commits.networkId))
    .where(eq(commits.id, input.commitId))
    .get();
  if (!commit) throw new RequestError(404, `commit ${input.commitId} not found`);
  if (input.runId) {
    const run = d.select({ commitId: runs.commitId }).from(runs).where(eq(runs.id, input.runId)).get();
    if (!run || run.commitId !== commit.id)
      throw new RequestError(422, `runId: run ${input.runId} is not a run of this commit`);
  }
  const id = newId("t");
  d.insert(threads)
    .values({
      id,
      workspaceId: commit.workspaceId,
      networkId: commit.networkId,
      commitId: commit.id,
      runId: input.runId ?? null,
      title,
      createdBy: input.authorId,
    })
    .run();
  const c = await addComment({ threadId: id, body, authorId: input.authorId, baseUrl: input.baseUrl }, notify, d);
  return { thread: getThreadRef(id, d)!, commentId: c.commentId, notified: c.notified };
}

/**
 * Adds a comment, and with `verdict` records the author's verdict on the
 * thread's commit. Sends the mention e-mails after the comment is stored;
 * a failed e-mail is reported in `mailErrors`, the comment stays.
 */
export async function addComment(
  input: {
    threadId: string;
    body: string;
    authorId: string;
    /** A verdict, or "withdrawn" to take back the author's newest verdict on the commit. */
    verdict?: ReviewEntry | null;
    verdictCommitId?: string | null;
    /** Base of the link in the e-mails (app/lib/auth.ts publicBaseUrl); default $RUNNEL_PUBLIC_URL. */
    baseUrl?: string;
  },
  notify: Notify,
  d: Q = db(),
): Promise<{ commentId: string; notified: string[]; mailErrors: string[] }> {
  const verdict = input.verdict ?? null;
  const body = checkBody(input.body, verdict);
  const thread = getThreadRef(input.threadId, d);
  if (!thread) throw new RequestError(404, `thread ${input.threadId} not found`);
  const commentId = newId("c");
  // A verdict is about the thread's commit, or about a later commit of the same network (the fix a reply links).
  const verdictCommit = input.verdictCommitId ?? thread.commitId;
  if (verdict && verdictCommit !== thread.commitId) {
    const c = d.select({ networkId: commits.networkId }).from(commits).where(eq(commits.id, verdictCommit)).get();
    if (!c || c.networkId !== thread.networkId)
      throw new RequestError(422, `commitId: ${verdictCommit} is not a commit of this thread's network`);
  }

  if (verdict === "signed_off") {
    // A commit whose newest run fails an expectation is signed off only with a written reason (sign-off.ts).
    const refused = signOffReasonError(verdictCommit, body, d);
    if (refused) throw new RequestError(422, refused);
  }
  if (verdict === "withdrawn") {
    const current = d
      .select({ verdict: reviews.verdict })
      .from(reviews)
      .where(and(eq(reviews.commitId, verdictCommit), eq(reviews.reviewerId, input.authorId)))
      .orderBy(desc(reviews.createdAt), desc(reviews.id))
      .get();
    if (!current || current.verdict === "withdrawn")
      throw new RequestError(409, "verdict: you have no verdict on this commit to withdraw");
  }

  const handles = extractMentions(body);
  const members = handles.length
    ? d
        .select({ userId: users.id, email: users.email, name: users.name })
        .from(memberships)
        .innerJoin(users, eq(users.id, memberships.userId))
        .where(eq(memberships.workspaceId, thread.workspaceId))
        .all()
    : [];
  const byHandle = new Map(members.map((m) => [handleOf(m.email), m]));
  const targets = [
    ...new Map(
      handles
        .map((h) => byHandle.get(h))
        .filter((m) => m !== undefined && m.userId !== input.authorId)
        .map((m) => [m!.userId, m!]),
    ).values(),
  ];

  const inbox = inboxItems(thread, input.authorId, commentId, targets, verdict, verdictCommit, d);
  immediate(d, (tx) => {
    tx.insert(comments)
      .values({
        id: commentId,
        threadId: thread.id,
        workspaceId: thread.workspaceId,
        authorId: input.authorId,
        body,
        notified: targets.map((t) => handleOf(t.email)),
      })
      .run();
    if (verdict)
      tx.insert(reviews)
        .values({
          id: newId("rv"),
          commitId: verdictCommit,
          workspaceId: thread.workspaceId,
          reviewerId: input.authorId,
          verdict,
          threadId: thread.id,
          commentId,
        })
        .run();
    tx.update(threads).set({ updatedAt: new Date() }).where(eq(threads.id, thread.id)).run();
    notifyInbox(inbox, tx);
  });

  const author = d.select({ name: users.name }).from(users).where(eq(users.id, input.authorId)).get();
  const link = `${(input.baseUrl ?? publicBaseUrl(new Headers())).replace(/\/+$/, "")}/threads/${thread.id}#${commentId}`;
  const mailErrors: string[] = [];
  for (const t of targets) {
    const excerpt = body.length > 600 ? `${body.slice(0, 600)}…` : body;
    try {
      await notify({
        to: t.email,
        subject: `[Runnel] ${author?.name ?? "Someone"} mentioned you in "${thread.title}"`,
        text: `${author?.name ?? "Someone"} mentioned you in the thread "${thread.title}":\n\n${excerpt}\n\nOpen the thread: ${link}\n`,
      });
    } catch (e) {
      mailErrors.push(`${t.email}: ${(e as Error).message}`);
    }
  }
  return { commentId, notified: targets.map((t) => handleOf(t.email)), mailErrors };
}

const VERDICT_NEWS: Record<ReviewEntry, string> = {
  signed_off: "signed off your commit",
  rework: "sent your commit back for rework",
  withdrawn: "withdrew their verdict on your commit",
};

/**
 * The inbox items a comment makes: a mention for each mentioned member, the
 * verdict for the commit's author, and a reply for everyone else already in
 * the thread (its opener and earlier commenters) — one item per person, the
 * most specific kind first; never for the author.
 */
function inboxItems(
  thread: ThreadRef,
  authorId: string,
  commentId: string,
  mentioned: { userId: string }[],
  verdict: ReviewEntry | null,
  verdictCommit: string,
  d: Q,
): NewNotification[] {
  const author = d.select({ name: users.name }).from(users).where(eq(users.id, authorId)).get()?.name ?? "Someone";
  const href = `/threads/${thread.id}#${commentId}`;
  const base = { workspaceId: thread.workspaceId, actorId: authorId, href, threadId: thread.id };
  const out = new Map<string, NewNotification>();
  for (const m of mentioned)
    out.set(m.userId, {
      ...base,
      userId: m.userId,
      kind: "mention",
      title: `${author} mentioned you in “${clip(thread.title)}”`,
    });
  if (verdict) {
    const c = d
      .select({ authorId: commits.authorId, message: commits.message })
      .from(commits)
      .where(eq(commits.id, verdictCommit))
      .get();
    if (c && !out.has(c.authorId))
      out.set(c.authorId, {
        ...base,
        userId: c.authorId,
        kind: "verdict",
        title: `${author} ${VERDICT_NEWS[verdict]} “${clip(c.message)}”`,
      });
  }
  const earlier = d
    .select({ authorId: comments.authorId })
    .from(comments)
    .where(eq(comments.threadId, thread.id))
    .all()
    .map((r) => r.authorId);
  const opener = d.select({ by: threads.createdBy }).from(threads).where(eq(threads.id, thread.id)).get()?.by;
  for (const userId of new Set([...(opener ? [opener] : []), ...earlier]))
    if (!out.has(userId))
      out.set(userId, { ...base, userId, kind: "reply", title: `${author} replied in “${clip(thread.title)}”` });
  out.delete(authorId);
  return [...out.values()];
}

export interface RunCard {
  id: string;
  found: boolean;
  state?: string;
  pointsDone?: number;
  pointsTotal?: number;
  commitId?: string;
  commitMessage?: string;
  probes?: { name: string; unit?: string | null; first: number; min: number; max: number }[];
  /** Its expectations from the summary stored when it ended (expectation-status.ts). */
  expectations?: ExpectationBadge;
}

/** Member handles of a workspace, with names (mention completion and resolution). */
export function memberHandles(workspaceId: string, d: Q = db()): { handle: string; name: string; userId: string }[] {
  return d
    .select({ userId: users.id, email: users.email, name: users.name })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.workspaceId, workspaceId))
    .all()
    .map((m) => ({ handle: handleOf(m.email), name: m.name, userId: m.userId }))
    .sort((a, b) => a.handle.localeCompare(b.handle));
}

/** What comments of a workspace render against: the referenced runs found there, and its members' handles. */
function renderContext(workspaceId: string, cards: RunCard[], d: Q): RenderContext {
  return {
    runs: new Set(cards.filter((c) => c.found).map((c) => c.id)),
    handles: new Set(memberHandles(workspaceId, d).map((m) => m.handle)),
  };
}

export interface CommentPreview {
  html: string;
  cards: RunCard[];
  /** What will not be posted as a card or a mention, and why. */
  warnings: string[];
  /** Members who will be notified. */
  mentions: { handle: string; name: string }[];
}

/**
 * A comment as it will be posted in a workspace: rendered against the
 * workspace, with a warning for each run reference that does not resolve
 * there (unknown, or a run of another workspace: the same words, nothing
 * leaks) and each handle that is no member. The author is not notified of
 * their own mention.
 */
export function previewComment(workspaceId: string, body: string, authorId: string, d: Q = db()): CommentPreview {
  const text = body.slice(0, MAX_COMMENT_LENGTH);
  const cards = runCards(extractRunRefs(text), workspaceId, d);
  const members = memberHandles(workspaceId, d);
  const byHandle = new Map(members.map((m) => [m.handle, m]));
  const warnings = [
    ...cards
      .filter((c) => !c.found)
      .map((c) => `run ${c.id} is not a run of this workspace: it will be posted as plain text, not as a card`),
    ...extractMentions(text)
      .filter((h) => !byHandle.has(h))
      .map((h) => `@${h} is not a member of this workspace: it will be posted as plain text and notify nobody`),
  ];
  if (body.length > MAX_COMMENT_LENGTH)
    warnings.push(`the comment is ${body.length} characters long; at most ${MAX_COMMENT_LENGTH} can be posted`);
  return {
    html: renderComment(text, renderContext(workspaceId, cards, d)),
    cards: cards.filter((c) => c.found),
    warnings,
    mentions: extractMentions(text)
      .map((h) => byHandle.get(h))
      .filter((m) => m !== undefined && m.userId !== authorId)
      .map((m) => ({ handle: m!.handle, name: m!.name })),
  };
}

/** Cards for run ids referenced in a workspace's comments (see the module contract). */
export function runCards(ids: string[], workspaceId: string, d: Q = db()): RunCard[] {
  if (ids.length === 0) return [];
  const found = new Map(
    d
      .select({
        id: runs.id,
        workspaceId: runs.workspaceId,
        state: runs.state,
        pointsDone: runs.pointsDone,
        pointsTotal: runs.pointsTotal,
        commitId: runs.commitId,
        commitMessage: commits.message,
        expectationsFailing: runs.expectationsFailing,
      })
      .from(runs)
      .innerJoin(commits, eq(commits.id, runs.commitId))
      .where(inArray(runs.id, ids))
      .all()
      .filter((r) => r.workspaceId === workspaceId)
      .map((r) => [r.id, r]),
  );
  const heads = layoutHeads([...found.keys()], d);
  return ids.map((id) => {
    const r = found.get(id);
    if (!r) return { id, found: false };
    return {
      id,
      found: true,
      state: r.state,
      pointsDone: r.pointsDone,
      pointsTotal: r.pointsTotal,
      commitId: r.commitId,
      commitMessage: r.commitMessage,
      probes: keyProbes(id, 4, d),
      expectations: runExpectationBadge(
        id,
        isLive(r.state) ? null : r.expectationsFailing,
        heads.get(id)?.expectations?.length ?? 0,
      ),
    };
  });
}

export interface ThreadView {
  thread: ThreadRef & { createdAt: number; authorName: string };
  workspace: { id: string; slug: string; name: string };
  network: { id: string; slug: string; name: string };
  commit: { id: string; parentId: string | null; message: string; authorName: string; createdAt: number };
  review: ReviewState;
  verdicts: { reviewerName: string; verdict: Verdict; at: number }[];
  comments: {
    id: string;
    authorId: string;
    authorName: string;
    html: string;
    body: string;
    createdAt: number;
    verdict: ReviewEntry | null;
    verdictCommitId: string | null;
    /** A sign-off given while the commit's newest runs failed expectations: their names (its body says why). */
    signedOffFailing: string[] | null;
  }[];
  /** Review state of each commit a verdict in this thread is about (the thread's commit first). */
  commitStates: { commitId: string; message: string; review: ReviewState }[];
  runCards: RunCard[];
}

/** Everything the thread page shows; null for an unknown id. */
export function getThread(id: string, d: Q = db()): ThreadView | null {
  const named = { columns: { id: true, slug: true, name: true } } as const;
  const t = d.query.threads
    .findFirst({
      where: eq(threads.id, id),
      with: {
        creator: { columns: { name: true } },
        workspace: named,
        network: named,
        commit: {
          columns: { id: true, parentId: true, message: true, createdAt: true },
          with: { author: { columns: { name: true } } },
        },
      },
    })
    .sync();
  if (!t) return null;
  const { author, ...c } = t.commit;
  const commit = { ...c, authorName: author.name };
  const rows = d
    .select({ c: comments, authorName: users.name })
    .from(comments)
    .innerJoin(users, eq(users.id, comments.authorId))
    .where(eq(comments.threadId, id))
    .orderBy(asc(comments.createdAt), asc(comments.id))
    .all();
  const verdictOf = new Map(
    d
      .select({ commentId: reviews.commentId, verdict: reviews.verdict, commitId: reviews.commitId })
      .from(reviews)
      .where(eq(reviews.threadId, id))
      .all()
      .map((r) => [r.commentId, r]),
  );
  const refs = [...new Set([...(t.runId ? [t.runId] : []), ...rows.flatMap((r) => extractRunRefs(r.c.body))])];
  const cards = runCards(refs, t.workspaceId, d);
  const ctx = renderContext(t.workspaceId, cards, d);
  const verdictCommits = [...new Set([commit.id, ...[...verdictOf.values()].map((v) => v.commitId)])];
  const badgeMap = commitBadges(verdictCommits, d);
  const badge = badgeMap.get(commit.id)!;
  const messages = new Map(
    d
      .select({ id: commits.id, message: commits.message })
      .from(commits)
      .where(inArray(commits.id, verdictCommits))
      .all()
      .map((c) => [c.id, c.message]),
  );
  return {
    thread: {
      id: t.id,
      workspaceId: t.workspaceId,
      networkId: t.networkId,
      commitId: t.commitId,
      runId: t.runId,
      title: t.title,
      createdAt: t.createdAt.getTime(),
      authorName: t.creator.name,
    },
    workspace: t.workspace,
    network: t.network,
    commit: { ...commit, createdAt: commit.createdAt.getTime() },
    review: badge.review,
    verdicts: badge.verdicts.map((v) => ({ reviewerName: v.reviewerName, verdict: v.verdict, at: v.at })),
    comments: rows.map((r) => ({
      id: r.c.id,
      authorId: r.c.authorId,
      authorName: r.authorName,
      body: r.c.body,
      html: renderComment(r.c.body, ctx),
      createdAt: r.c.createdAt.getTime(),
      verdict: verdictOf.get(r.c.id)?.verdict ?? null,
      verdictCommitId: verdictOf.get(r.c.id)?.commitId ?? null,
      signedOffFailing: failingAtSignOff(verdictOf.get(r.c.id), r.c.createdAt, d),
    })),
    runCards: cards.filter((c) => c.found),
    commitStates: verdictCommits.map((id) => ({
      commitId: id,
      message: messages.get(id) ?? "",
      review: badgeMap.get(id)!.review,
    })),
  };
}

/** The expectations a sign-off was given over (failing in the commit's newest runs then), or null. */
function failingAtSignOff(v: { verdict: ReviewEntry; commitId: string } | undefined, at: Date, d: Q): string[] | null {
  if (v?.verdict !== "signed_off") return null;
  const failing = signOffSummaries([v.commitId], d, at)[v.commitId]?.failing ?? [];
  return failing.length ? failing : null;
}

/** Threads of a network (or of one commit), newest activity first. */
export function listThreads(where: { networkId: string; commitId?: string }, d: Q = db()) {
  return d
    .select({
      id: threads.id,
      title: threads.title,
      commitId: threads.commitId,
      runId: threads.runId,
      updatedAt: threads.updatedAt,
      authorName: users.name,
    })
    .from(threads)
    .innerJoin(users, eq(users.id, threads.createdBy))
    .where(
      where.commitId
        ? and(eq(threads.networkId, where.networkId), eq(threads.commitId, where.commitId))
        : eq(threads.networkId, where.networkId),
    )
    .orderBy(desc(threads.updatedAt))
    .all()
    .map((t) => ({ ...t, updatedAt: t.updatedAt.getTime() }));
}
