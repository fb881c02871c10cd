import { requestActor, workspaceAccess } from "@/app/lib/access";
import { handle } from "@/app/lib/http";
import { revokeInvitation } from "@/app/lib/invitations";

export const dynamic = "force-dynamic";

/** DELETE /api/w/[slug]/invitations/[id]: withdraws a pending invitation (owners). 204. */
export function DELETE(req: Request, ctx: { params: Promise<{ slug: string; id: string }> }) {
  return handle(async () => {
    const { slug, id } = await ctx.params;
    const { workspace } = workspaceAccess(await requestActor(req), "workspace.manage", slug);
    revokeInvitation(workspace.id, id);
    return new Response(null, { status: 204 });
  });
}
