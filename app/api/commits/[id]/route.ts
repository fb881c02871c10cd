import { commitAccess, requestActor } from "@/app/lib/access";
import { handle } from "@/app/lib/http";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/**
 * GET /api/commits/[id] (workspace.read): the commit with its text and diagnostics.
 * With `?download`, the text alone as a `.runnel` attachment named after the network and commit.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { commit, network } = commitAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    if (new URL(request.url).searchParams.has("download")) {
      return new Response(commit.text, {
        headers: {
          "content-type": "text/plain; charset=utf-8",
          "content-disposition": `attachment; filename="${network.slug}-${commit.id.slice(0, 12)}.runnel"`,
          "cache-control": "private, max-age=31536000, immutable",
        },
      });
    }
    // A commit never changes: the browser may keep it.
    return Response.json({ commit, network }, { headers: { "cache-control": "private, max-age=31536000, immutable" } });
  });
}
