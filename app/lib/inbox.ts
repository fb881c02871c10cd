/**
 * The in-app inbox: what happened that concerns a person — a mention, a
 * verdict on their commit, a reply in a thread they are in, their run that
 * finished or failed — each linking to its place. E-mail (mentions) is sent
 * besides, by the thread code.
 *
 * Contracts
 * - Rows are written in the same transaction as what caused them (a comment,
 *   a verdict) or right after a run ends; nobody is notified of their own act.
 * - A person sees only items of workspaces they are still a member of.
 * - Marking read touches only the caller's own rows.
 */
import { and, count, desc, eq, inArray, isNull, lt } from "drizzle-orm";
import { db, type Q } from "@/db";
import { newId } from "@/db/ids";
import { memberships, notifications, runs, commits, networks, type NotificationKind } from "@/db/schema";

export interface NewNotification {
  userId: string;
  workspaceId: string;
  kind: NotificationKind;
  actorId: string | null;
  title: string;
  href: string;
  threadId?: string | null;
  runId?: string | null;
}

/** Writes notifications (call inside the transaction of what caused them); drops any addressed to their own actor. */
export function notify(items: NewNotification[], d: Q = db()): number {
  const rows = items.filter((n) => n.userId !== n.actorId);
  for (const n of rows)
    d.insert(notifications)
      .values({ id: newId("nt"), ...n, threadId: n.threadId ?? null, runId: n.runId ?? null })
      .run();
  return rows.length;
}

const TITLE_LIMIT = 160;
/** A title cut to a readable length. */
export function clip(s: string, n = 60): string {
  return s.length > n ? `${s.slice(0, n - 1)}…` : s;
}

/** Tells the person who started a run that it ended (done or failed). No-op for other states. */
export function notifyRunEnded(runId: string, d: Q = db()): void {
  const r = d
    .select({
      state: runs.state,
      reason: runs.reason,
      createdBy: runs.createdBy,
      workspaceId: runs.workspaceId,
      message: commits.message,
      network: networks.name,
    })
    .from(runs)
    .innerJoin(commits, eq(commits.id, runs.commitId))
    .innerJoin(networks, eq(networks.id, runs.networkId))
    .where(eq(runs.id, runId))
    .get();
  if (!r || (r.state !== "done" && r.state !== "failed")) return;
  const what = `Your run of ${r.network} (“${clip(r.message, 50)}”)`;
  notify(
    [
      {
        userId: r.createdBy,
        workspaceId: r.workspaceId,
        kind: r.state === "done" ? "run_done" : "run_failed",
        actorId: null,
        title: clip(
          r.state === "done" ? `${what} finished` : `${what} failed: ${r.reason ?? "no reason given"}`,
          TITLE_LIMIT,
        ),
        href: `/runs/${runId}`,
        runId,
      },
    ],
    d,
  );
}

export interface InboxItem {
  id: string;
  kind: NotificationKind;
  title: string;
  href: string;
  createdAt: number;
  read: boolean;
}

const visible = (userId: string, d: Q) =>
  and(
    eq(notifications.userId, userId),
    inArray(
      notifications.workspaceId,
      d.select({ id: memberships.workspaceId }).from(memberships).where(eq(memberships.userId, userId)),
    ),
  );

/** A page of the person's inbox, newest first (keyset: items older than `before`, an id). */
export function listInbox(
  userId: string,
  options: { unread?: boolean; limit?: number; before?: string } = {},
  d: Q = db(),
): { items: InboxItem[]; more: boolean } {
  const limit = Math.min(200, Math.max(1, options.limit ?? 50));
  const before = options.before
    ? d.select({ at: notifications.createdAt }).from(notifications).where(eq(notifications.id, options.before)).get()
    : undefined;
  const rows = d
    .select()
    .from(notifications)
    .where(
      and(
        visible(userId, d),
        options.unread ? isNull(notifications.readAt) : undefined,
        before ? lt(notifications.createdAt, before.at) : undefined,
      ),
    )
    .orderBy(desc(notifications.createdAt), desc(notifications.id))
    .limit(limit + 1)
    .all();
  return {
    items: rows.slice(0, limit).map((n) => ({
      id: n.id,
      kind: n.kind,
      title: n.title,
      href: n.href,
      createdAt: n.createdAt.getTime(),
      read: n.readAt !== null,
    })),
    more: rows.length > limit,
  };
}

/** Unread items of the person (the header badge). */
export function unreadCount(userId: string, d: Q = db()): number {
  return d
    .select({ n: count() })
    .from(notifications)
    .where(and(visible(userId, d), isNull(notifications.readAt)))
    .get()!.n;
}

/** Marks the person's own items read (`ids`, or every one with `all`); returns how many changed. */
export function markRead(userId: string, which: { ids?: string[]; all?: boolean }, d: Q = db()): number {
  if (!which.all && !which.ids?.length) return 0;
  return d
    .update(notifications)
    .set({ readAt: new Date() })
    .where(
      and(
        eq(notifications.userId, userId),
        isNull(notifications.readAt),
        which.all ? undefined : inArray(notifications.id, which.ids!),
      ),
    )
    .run().changes;
}
