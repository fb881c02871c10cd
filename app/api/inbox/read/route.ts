import { z } from "zod";
import { requestActor } from "@/app/lib/access";
import { handle, readJson, RequestError } from "@/app/lib/http";
import { markRead, unreadCount } from "@/app/lib/inbox";
import { authenticated } from "@/app/lib/policy";

export const dynamic = "force-dynamic";

const Body = z.object({ ids: z.array(z.string().min(1).max(64)).max(500).optional(), all: z.boolean().optional() });

/** POST /api/inbox/read {ids} or {all: true} (signed in): marks the caller's own items read; another's ids change nothing. */
export function POST(request: Request) {
  return handle(async () => {
    const actor = authenticated(await requestActor(request));
    const input = await readJson(request, Body);
    if (!input.all && !input.ids?.length) throw new RequestError(400, "ids: name the items, or send all: true");
    const changed = markRead(actor.userId, input);
    return Response.json({ changed, unread: unreadCount(actor.userId) });
  });
}
