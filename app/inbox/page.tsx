import type { Metadata } from "next";
import { requireActor } from "@/app/lib/auth";
import { listInbox, unreadCount } from "@/app/lib/inbox";
import { InboxList } from "@/app/ui/inbox/inbox-list";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Inbox" };

/** /inbox: what concerns me — mentions, verdicts on my commits, replies in my threads, my runs that ended. */
export default async function InboxPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | undefined>>;
}) {
  const actor = await requireActor("/inbox");
  const q = await searchParams;
  const unreadOnly = q.unread === "1";
  const { items, more } = listInbox(actor.userId, { unread: unreadOnly, limit: 100, before: q.before });
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-semibold">Inbox</h1>
      <InboxList items={items} more={more} unread={unreadCount(actor.userId)} unreadOnly={unreadOnly} />
    </div>
  );
}
