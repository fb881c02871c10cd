import { guard } from "@/app/lib/guard";
import { handle } from "@/app/lib/http";
import { getCommit, getNetwork } from "@/app/lib/networks";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/**
 * GET /api/commits/[id] (workspace.read): the commit with its text and diagnostics.
 * With `?download`, the text alone as a `.runnel` attachment named after the network and commit.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const c = getCommit((await ctx.params).id);
    const n = c ? getNetwork(c.networkId) : null;
    await guard(request, "workspace.read", n?.workspaceId);
    if (new URL(request.url).searchParams.has("download")) {
      return new Response(c!.text, {
        headers: {
          "content-type": "text/plain; charset=utf-8",
          "content-disposition": `attachment; filename="${n!.slug}-${c!.id.slice(0, 12)}.runnel"`,
          "cache-control": "private, max-age=31536000, immutable",
        },
      });
    }
    // A commit never changes: the browser may keep it.
    return Response.json(
      { commit: c, network: n },
      { headers: { "cache-control": "private, max-age=31536000, immutable" } },
    );
  });
}
