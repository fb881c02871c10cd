import { requestActor, runAccess } from "@/app/lib/access";
import { fresh, handle } from "@/app/lib/http";
import { cancelRun } from "@/app/lib/run-supervisor";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** POST /api/runs/[id]/cancel (run.start): cancel a queued or running run; 409 when it has already ended. */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const { run } = runAccess(await requestActor(request), "run.start", (await ctx.params).id);
    return fresh({ run: await cancelRun(run.id) });
  });
}
