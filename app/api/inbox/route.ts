import { z } from "zod";
import { requestActor } from "@/app/lib/access";
import { fresh, handle, parseInput, queryOf } from "@/app/lib/http";
import { listInbox, unreadCount } from "@/app/lib/inbox";
import { authenticated } from "@/app/lib/policy";

export const dynamic = "force-dynamic";

const Query = z.object({
  unread: z.enum(["0", "1"]).optional(),
  limit: z.coerce.number().int().min(1).max(200).optional(),
  before: z.string().min(1).max(64).optional(),
});

/**
 * GET /api/inbox[?unread=1&limit=50&before=ID] (signed in): the caller's own
 * inbox, newest first, items of workspaces they are a member of, and the unread count.
 */
export function GET(request: Request) {
  return handle(async () => {
    const actor = authenticated(await requestActor(request));
    const q = parseInput(Query, queryOf(request));
    const page = listInbox(actor.userId, { unread: q.unread === "1", limit: q.limit, before: q.before });
    return fresh({ ...page, unread: unreadCount(actor.userId) });
  });
}
