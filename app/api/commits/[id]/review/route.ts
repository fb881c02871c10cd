import { reviewAccess as guard } from "@/app/lib/review/access";
import { fresh, handle } from "@/app/lib/http";
import { getCommit, getNetwork } from "@/app/lib/networks";
import { commitBadges } from "@/app/lib/review/diffs";
import { listThreads } from "@/app/lib/review/threads";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/commits/[id]/review (workspace.read): review state, verdicts, stored diffs and threads of a commit. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const c = getCommit((await ctx.params).id);
    const n = c ? getNetwork(c.networkId) : null;
    await guard(request, "workspace.read", n?.workspaceId);
    return fresh({ ...commitBadges([c!.id]).get(c!.id)!, threads: listThreads({ networkId: n!.id, commitId: c!.id }) });
  });
}
