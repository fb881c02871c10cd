import { commitAccess, requestActor } from "@/app/lib/access";
import { fresh, handle } from "@/app/lib/http";
import { commitBadge } from "@/app/lib/review/diffs";
import { listThreads } from "@/app/lib/review/threads";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/commits/[id]/review (workspace.read): review state, verdicts, stored diffs and threads of a commit. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { commit, network } = commitAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return fresh({ ...commitBadge(commit.id), threads: listThreads({ networkId: network.id, commitId: commit.id }) });
  });
}
