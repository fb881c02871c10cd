import { z } from "zod";
import { requestActor, workspaceAccess } from "@/app/lib/access";
import { fresh, handle, readJson } from "@/app/lib/http";
import { createWorkerToken, listWorkerTokens } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ slug: string }> };

/** GET /api/w/[slug]/worker-tokens (owners): the workspace's worker tokens that are not revoked (never the secrets). */
export function GET(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { workspace } = workspaceAccess(await requestActor(req), "workspace.manage", (await ctx.params).slug);
    return fresh({ tokens: listWorkerTokens(workspace.id) });
  });
}

const NewToken = z.object({ name: z.string().trim().min(1, "give the token a name").max(80, "at most 80 characters") });

/**
 * POST /api/w/[slug]/worker-tokens `{ name }` (owners): a token for `npm run worker` that serves this workspace's
 * runs; 201 with the token, shown this once.
 */
export function POST(req: Request, ctx: Ctx) {
  return handle(async () => {
    const { actor, workspace } = workspaceAccess(await requestActor(req), "workspace.manage", (await ctx.params).slug);
    const { name } = await readJson(req, NewToken);
    return fresh({ token: createWorkerToken(workspace.id, name, actor.userId) }, { status: 201 });
  });
}
