import { guard } from "@/app/lib/guard";
import { fresh, handle } from "@/app/lib/http";
import { getRun } from "@/app/lib/runs";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/runs/[id] (workspace.read): state, progress, reason, model, solver and validity figures. Polled while a run is live. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const run = getRun((await ctx.params).id);
    await guard(request, "workspace.read", run?.workspaceId);
    return fresh({ run });
  });
}
