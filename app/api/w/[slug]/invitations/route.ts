import { requestActor, workspaceAccess } from "@/app/lib/access";
import { publicBaseUrl } from "@/app/lib/auth";
import { fresh, handle, readJson } from "@/app/lib/http";
import { inviteMember, inviteSchema, listPendingInvitations } from "@/app/lib/invitations";
import { MailError } from "@/app/lib/mail";

export const dynamic = "force-dynamic";

type Ctx = { params: Promise<{ slug: string }> };

/** GET /api/w/[slug]/invitations: pending invitations (owners). */
export function GET(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { slug } = await ctx.params;
    const { workspace } = workspaceAccess(await requestActor(req), "workspace.manage", slug);
    return fresh({ invitations: listPendingInvitations(workspace.id) });
  });
}

/** POST /api/w/[slug]/invitations {email, role}: invites and e-mails the link (owners). 201; 503 when mail cannot be sent. */
export function POST(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { slug } = await ctx.params;
    const { actor, workspace } = workspaceAccess(await requestActor(req), "workspace.manage", slug);
    const { email, role } = await readJson(req, inviteSchema);
    try {
      const invitation = await inviteMember({
        workspace,
        email,
        role,
        inviter: actor,
        baseUrl: publicBaseUrl(req.headers),
      });
      return fresh({ invitation }, { status: 201 });
    } catch (e) {
      if (e instanceof MailError) return Response.json({ error: e.message }, { status: 503 });
      throw e;
    }
  });
}
