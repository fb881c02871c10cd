import { commitAccess, requestActor } from "@/app/lib/access";
import { handle } from "@/app/lib/http";
import { commitSensitivity } from "@/app/lib/sensitivity-cache";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/**
 * GET /api/commits/[id]/sensitivity (workspace.read): the commit's adjoint sensitivities and first-order mismatch
 * budget at the file's own point (app/lib/sensitivity-view.ts), as the run page's Sensitivity view has them: what
 * the compare page sets side by side for two commits. Computed in the interactive pool once per commit.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { commit } = commitAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    const v = await commitSensitivity(commit);
    return Response.json({ commitId: commit.id, ...v }, { headers: { "cache-control": "private, max-age=300" } });
  });
}
