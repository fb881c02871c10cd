import { checkOrigin, getActor } from "@/app/lib/auth";
import { fresh, handle, readJson } from "@/app/lib/http";
import { authenticated } from "@/app/lib/policy";
import { createWorkspace, listWorkspacesFor, newWorkspaceSchema } from "@/app/lib/workspaces";

export const dynamic = "force-dynamic";

/** GET /api/workspaces: the actor's workspaces with their role. */
export function GET(req: Request) {
  return handle(async () => {
    const actor = authenticated(await getActor(req));
    return fresh({ workspaces: listWorkspacesFor(actor.userId) });
  });
}

/** POST /api/workspaces {name, slug?, description?}: a new workspace; the actor becomes its owner. 201. */
export function POST(req: Request) {
  return handle(async () => {
    checkOrigin(req);
    const actor = authenticated(await getActor(req));
    const input = await readJson(req, newWorkspaceSchema);
    return fresh({ workspace: createWorkspace(actor.userId, input) }, { status: 201 });
  });
}
