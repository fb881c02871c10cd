import { z } from "zod";
import { networkAccess, requestActor } from "@/app/lib/access";
import { fresh, handle, readJson } from "@/app/lib/http";
import { renameNetwork, setNetworkArchived } from "@/app/lib/networks";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/networks/[id] (workspace.read): the network. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { network } = networkAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return fresh({ network });
  });
}

const Change = z
  .object({ name: z.string().max(200).optional(), archived: z.boolean().optional() })
  .refine((b) => b.name !== undefined || b.archived !== undefined, { message: "send a name or archived" });

/**
 * PATCH /api/networks/[id]: `name` renames (network.write; the URL name stays); `archived: true` hides the
 * network from the workspace's list, its history kept (network.write); `archived: false` brings it back
 * (workspace.manage: owners).
 */
export function PATCH(request: Request, ctx: Ctx) {
  return handle(async () => {
    const actor = await requestActor(request);
    const id = (await ctx.params).id;
    networkAccess(actor, "workspace.read", id); // 401 / 404 before the body is read
    const change = await readJson(request, Change);
    let { network } = networkAccess(actor, change.archived === false ? "workspace.manage" : "network.write", id);
    if (change.name !== undefined) network = renameNetwork(network.id, change.name);
    if (change.archived !== undefined) network = setNetworkArchived(network.id, change.archived);
    return fresh({ network });
  });
}
