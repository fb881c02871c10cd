import { guard } from "@/app/lib/guard";
import { fresh, handle } from "@/app/lib/http";
import { cancelRun } from "@/app/lib/run-supervisor";
import { getRun } from "@/app/lib/runs";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** POST /api/runs/[id]/cancel (run.start): cancel a queued or running run; 409 when it has already ended. */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const run = getRun((await ctx.params).id);
    await guard(request, "run.start", run?.workspaceId);
    return fresh({ run: cancelRun(run!.id) });
  });
}
