import { requestActor, threadAccess } from "@/app/lib/access";
import { fresh, handle } from "@/app/lib/http";
import { getThread } from "@/app/lib/review/threads";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/threads/[id] (workspace.read): the thread, its rendered comments, run cards and the commit's review state. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { thread } = threadAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return fresh(getThread(thread.id));
  });
}
