import { reviewAccess as guard } from "@/app/lib/review/access";
import { fresh, handle } from "@/app/lib/http";
import { getThread, getThreadRef } from "@/app/lib/review/threads";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/threads/[id] (workspace.read): the thread, its rendered comments, run cards and the commit's review state. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const ref = getThreadRef((await ctx.params).id);
    await guard(request, "workspace.read", ref?.workspaceId);
    return fresh(getThread(ref!.id));
  });
}
