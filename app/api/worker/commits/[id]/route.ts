import { handle } from "@/app/lib/http";
import { commitTextFor } from "@/app/lib/run-ingest";
import { requestWorker } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ id: string }> };

/** GET /api/worker/commits/[id] (worker token): the network text of a commit with a chunk handed out to this worker. */
export function GET(request: Request, ctx: Ctx) {
  return handle(async () => {
    const worker = requestWorker(request);
    const text = commitTextFor(worker, (await ctx.params).id);
    return new Response(text, {
      headers: { "content-type": "text/plain; charset=utf-8", "cache-control": "no-store" },
    });
  });
}
