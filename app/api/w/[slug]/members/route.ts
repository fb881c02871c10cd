import { getActor } from "@/app/lib/auth";
import { fresh, handle } from "@/app/lib/http";
import { listMembers } from "@/app/lib/members";
import { authorizeSlug } from "@/app/lib/policy";

export const dynamic = "force-dynamic";

/** GET /api/w/[slug]/members: every member with their role (any member may read). */
export function GET(req: Request, ctx: { params: Promise<{ slug: string }> }) {
  return handle(async () => {
    const { slug } = await ctx.params;
    const { workspace } = authorizeSlug(await getActor(req), "workspace.read", slug);
    return fresh({ members: listMembers(workspace.id) });
  });
}
