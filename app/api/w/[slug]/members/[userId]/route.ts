import { z } from "zod";
import { checkOrigin, getActor } from "@/app/lib/auth";
import { fresh, handle, readJson } from "@/app/lib/http";
import { changeRole, removeMember, roleSchema } from "@/app/lib/members";
import { authorizeSlug } from "@/app/lib/policy";

export const dynamic = "force-dynamic";

type Ctx = { params: Promise<{ slug: string; userId: string }> };

/** PATCH /api/w/[slug]/members/[userId] {role}: owners change roles; 409 for demoting the last owner. */
export function PATCH(req: Request, ctx: Ctx) {
  return handle(async () => {
    checkOrigin(req);
    const { slug, userId } = await ctx.params;
    const { workspace } = authorizeSlug(await getActor(req), "workspace.manage", slug);
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
    checkOrigin(req);
    const { slug, userId } = await ctx.params;
    const actor = await getActor(req);
    const self = actor !== null && actor.userId === userId;
    const { workspace } = authorizeSlug(actor, self ? "workspace.read" : "workspace.manage", slug);
    removeMember(workspace.id, userId);
    return new Response(null, { status: 204 });
  });
}
