import { commitAccess, requestActor } from "@/app/lib/access";
import { handle, RequestError } from "@/app/lib/http";
import { structureInWorker } from "@/app/lib/interactive";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/**
 * GET /api/commits/[id]/structure?q=TEXT (workspace.read): the commit's devices with their nodes, the nodes
 * with the devices at each (rows matching q, at most 500 each, with the counts), and for a network of at most
 * 400 devices the graph to draw (app/lib/structure.ts), read in the interactive pool. 422 when the commit's text
 * has errors (nothing to show).
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { commit } = commitAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    const q = (new URL(request.url).searchParams.get("q") ?? "").slice(0, 200);
    const view = await structureInWorker(commit.id, commit.text, q, request.signal);
    if (!view) throw new RequestError(422, "this commit has errors: fix them and commit to see its structure");
    return Response.json({ structure: view }, { headers: { "cache-control": "private, max-age=300" } });
  });
}
