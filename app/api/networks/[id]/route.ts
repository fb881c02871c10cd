import { z } from "zod";
import { networkAccess, requestActor } from "@/app/lib/access";
import { fresh, handle, readJson } from "@/app/lib/http";
import { renameNetwork } from "@/app/lib/networks";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/networks/[id] (workspace.read): the network. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { network } = networkAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return fresh({ network });
  });
}

const Rename = z.object({ name: z.string().max(200) });

/** PATCH /api/networks/[id] (network.write): rename; the URL name stays. */
export function PATCH(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { network } = networkAccess(await requestActor(request), "network.write", (await ctx.params).id);
    const { name } = await readJson(request, Rename);
    return fresh({ network: renameNetwork(network.id, name) });
  });
}
