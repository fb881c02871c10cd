import { z } from "zod";
import { requestActor, workspaceAccess } from "@/app/lib/access";
import { fresh, handle, readJson } from "@/app/lib/http";
import { changeRole, removeMember, roleSchema } from "@/app/lib/members";

export const dynamic = "force-dynamic";

type Ctx = { params: Promise<{ slug: string; userId: string }> };

/** PATCH /api/w/[slug]/members/[userId] {role}: owners change roles; 409 for demoting the last owner. */
export function PATCH(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { slug, userId } = await ctx.params;
    const { workspace } = workspaceAccess(await requestActor(req), "workspace.manage", slug);
    const { role } = await readJson(req, z.object({ role: roleSchema }));
    return fresh({ member: changeRole(workspace.id, userId, role) });
  });
}

/**
 * DELETE /api/w/[slug]/members/[userId]: owners remove members; any member may
 * remove themselves (leave). 409 for the last owner. 204.
 */
export function DELETE(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { slug, userId } = await ctx.params;
    const actor = await requestActor(req);
    const self = actor !== null && actor.userId === userId;
    const { workspace } = workspaceAccess(actor, self ? "workspace.read" : "workspace.manage", slug);
    removeMember(workspace.id, userId);
    return new Response(null, { status: 204 });
  });
}
