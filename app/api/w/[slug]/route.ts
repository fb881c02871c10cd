import { getActor } from "@/app/lib/auth";
import { fresh, handle } from "@/app/lib/http";
import { authorizeSlug } from "@/app/lib/policy";

export const dynamic = "force-dynamic";

/** GET /api/w/[slug]: the workspace and the actor's role in it. */
export function GET(req: Request, ctx: { params: Promise<{ slug: string }> }) {
  return handle(async () => {
    const { slug } = await ctx.params;
    const { workspace, role } = authorizeSlug(await getActor(req), "workspace.read", slug);
    return fresh({ workspace, role });
  });
}
