import { z } from "zod";
import { requestActor, workspaceAccess } from "@/app/lib/access";
import { fresh, handle, readJson } from "@/app/lib/http";
import { createNetwork, listNetworks } from "@/app/lib/networks";
import { retryBusy } from "@/app/lib/db-busy";
import { checkTextInWorker } from "@/app/lib/interactive";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ slug: string }> };

/**
 * GET /api/w/[slug]/networks (workspace.read): the workspace's networks with their head commit and newest run;
 * `?archived=1` (workspace.manage: owners) the archived ones instead.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const archived = new URL(request.url).searchParams.get("archived") === "1";
    const { workspace: w } = workspaceAccess(
      await requestActor(request),
      archived ? "workspace.manage" : "workspace.read",
      (await ctx.params).slug,
    );
    return fresh({ workspace: { id: w.id, slug: w.slug, name: w.name }, networks: listNetworks(w.id, { archived }) });
  });
}

const CreateNetwork = z.object({
  name: z.string().max(200),
  /** Starting text (an uploaded .runnel file): makes the first commit. */
  text: z.string().optional(),
  message: z.string().max(2000).optional(),
});

/** POST /api/w/[slug]/networks (network.write): create a network, optionally with a first commit of `text`. */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { actor, workspace } = workspaceAccess(await requestActor(request), "network.write", (await ctx.params).slug);
    const input = await readJson(request, CreateNetwork);
    const check = input.text === undefined ? undefined : await checkTextInWorker(input.text, request.signal);
    const created = await retryBusy(() =>
      createNetwork({
        workspaceId: workspace.id,
        name: input.name,
        text: input.text,
        message: input.message,
        authorId: actor.userId,
        check,
      }),
    );
    return fresh(created, { status: 201 });
  });
}
