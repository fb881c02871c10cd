import { requestActor, runAccess } from "@/app/lib/access";
import { fresh, handle } from "@/app/lib/http";
import { storedExpectations } from "@/app/lib/run-expectations";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/**
 * GET /api/runs/[id] (workspace.read): state, progress, reason, model, solver and validity figures, and once it
 * has ended the summaries of its expectations. Polled while a run is live.
 */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { run } = runAccess(await requestActor(request), "workspace.read", (await ctx.params).id);
    return fresh({ run, expectations: storedExpectations(run.id) });
  });
}
