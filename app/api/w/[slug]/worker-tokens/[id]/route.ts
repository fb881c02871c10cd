import { requestActor, workspaceAccess } from "@/app/lib/access";
import { handle, RequestError } from "@/app/lib/http";
import { revokeWorkerToken } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ slug: string; id: string }> };

/** DELETE /api/w/[slug]/worker-tokens/[id] (owners): revokes the token at once (its workers get 401). 204; 404 if unknown. */
export function DELETE(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { slug, id } = await ctx.params;
    const { workspace } = workspaceAccess(await requestActor(req), "workspace.manage", slug);
    if (!revokeWorkerToken(workspace.id, id)) throw new RequestError(404, "no such worker token in this workspace");
    return new Response(null, { status: 204 });
  });
}
