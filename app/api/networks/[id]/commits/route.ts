import { z } from "zod";
import { guard } from "@/app/lib/guard";
import { fresh, handle, readJson } from "@/app/lib/http";
import { commitText, getNetwork, listCommits } from "@/app/lib/networks";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/networks/[id]/commits (workspace.read): the history, newest first, without texts. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const n = getNetwork((await ctx.params).id);
    await guard(request, "workspace.read", n?.workspaceId);
    return fresh({ network: n, commits: listCommits(n!.id) });
  });
}

const Commit = z.object({
  /** The commit the text was edited from: must be the network's head (null for the first commit). */
  parent: z.string().nullable(),
  text: z.string(),
  message: z.string().max(2000),
});

/** POST /api/networks/[id]/commits (network.write): commit a text on top of the head. 409 when the head moved or nothing changed. */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const n = getNetwork((await ctx.params).id);
    const { actor } = await guard(request, "network.write", n?.workspaceId);
    const input = await readJson(request, Commit);
    const commit = commitText({
      networkId: n!.id,
      parentId: input.parent,
      text: input.text,
      message: input.message,
      authorId: actor.userId,
    });
    return fresh({ commit }, { status: 201 });
  });
}
