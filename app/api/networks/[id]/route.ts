import { z } from "zod";
import { guard } from "@/app/lib/guard";
import { fresh, handle, readJson } from "@/app/lib/http";
import { getNetwork, renameNetwork } from "@/app/lib/networks";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/networks/[id] (workspace.read): the network. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const n = getNetwork((await ctx.params).id);
    await guard(request, "workspace.read", n?.workspaceId);
    return fresh({ network: n });
  });
}

const Rename = z.object({ name: z.string().max(200) });

/** PATCH /api/networks/[id] (network.write): rename; the URL name stays. */
export function PATCH(request: Request, ctx: Ctx) {
  return handle(async () => {
    const n = getNetwork((await ctx.params).id);
    await guard(request, "network.write", n?.workspaceId);
    const { name } = await readJson(request, Rename);
    return fresh({ network: renameNetwork(n!.id, name) });
  });
}
