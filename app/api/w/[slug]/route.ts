import { requestActor, workspaceAccess } from "@/app/lib/access";
import { fresh, handle } from "@/app/lib/http";

export const dynamic = "force-dynamic";

/** GET /api/w/[slug]: the workspace and the actor's role in it. */
export function GET(req: Request, ctx: { params: Promise<{ slug: string }> }) {
  return handle(async () => {
    const { slug } = await ctx.params;
    const { workspace, role } = workspaceAccess(await requestActor(req), "workspace.read", slug);
    return fresh({ workspace, role });
  });
}
