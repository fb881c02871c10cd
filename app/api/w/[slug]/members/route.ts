import { requestActor, workspaceAccess } from "@/app/lib/access";
import { fresh, handle } from "@/app/lib/http";
import { listMembers } from "@/app/lib/members";

export const dynamic = "force-dynamic";

/** GET /api/w/[slug]/members: every member with their role (any member may read). */
export function GET(req: Request, ctx: { params: Promise<{ slug: string }> }) {
  return handle(async () => {
    const { slug } = await ctx.params;
    const { workspace } = workspaceAccess(await requestActor(req), "workspace.read", slug);
    return fresh({ members: listMembers(workspace.id) });
  });
}
