import { getActor } from "@/app/lib/auth";
import { fresh, handle } from "@/app/lib/http";
import { authenticated } from "@/app/lib/policy";
import { listWorkspacesFor } from "@/app/lib/workspaces";

export const dynamic = "force-dynamic";

/** GET /api/me: who the session or token is, and their workspaces with roles (the `runnel` command's whoami). */
export function GET(req: Request) {
  return handle(async () => {
    const actor = authenticated(await getActor(req));
    return fresh({
      user: { id: actor.userId, email: actor.email, name: actor.name },
      via: actor.via,
      workspaces: listWorkspacesFor(actor.userId),
    });
  });
}
