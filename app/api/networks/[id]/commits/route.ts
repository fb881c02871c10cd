import { z } from "zod";
import { networkAccess, requestActor } from "@/app/lib/access";
import { fresh, handle, readJson } from "@/app/lib/http";
import { commitText, listCommits } from "@/app/lib/networks";
import { retryBusy } from "@/app/lib/db-busy";
import { checkTextInWorker } from "@/app/lib/interactive";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/networks/[id]/commits (workspace.read): the history, newest first, without texts. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { network } = networkAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return fresh({ network, commits: listCommits(network.id) });
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
    const { actor, network } = networkAccess(await requestActor(request), "network.write", (await ctx.params).id);
    const input = await readJson(request, Commit);
    // Elaboration (up to millions of devices) runs in the interactive pool; the write is one short transaction.
    const check = await checkTextInWorker(input.text, request.signal);
    const commit = await retryBusy(() =>
      commitText({
        networkId: network.id,
        parentId: input.parent,
        text: input.text,
        message: input.message,
        authorId: actor.userId,
        check,
      }),
    );
    return fresh({ commit }, { status: 201 });
  });
}
