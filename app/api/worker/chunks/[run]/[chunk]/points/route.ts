import { z } from "zod";
import { fresh, handle, parseInput, queryOf, readBytes } from "@/app/lib/http";
import { ingestBatch } from "@/app/lib/run-ingest";
import { MAX_BATCH_BYTES } from "@/app/lib/run-wire";
import { requestWorker } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ run: string; chunk: string }> };

const Where = z.object({ chunk: z.coerce.number().int().min(0), attempt: z.coerce.number().int().min(1) });

/**
 * POST /api/worker/chunks/[run]/[chunk]/points?attempt=N (worker token, binary batch of app/lib/run-wire.ts):
 * stores the points; answers `{ stored, stop }` (stop: 0 go on, 1 canceled, 2 time limit, 3 another chunk failed).
 * 409 when the chunk is not handed out to this token at this attempt or the run is not running; 422 for a point
 * outside the chunk or not of the run's layout (nothing of the batch is stored); 413 past MAX_BATCH_BYTES.
 */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const worker = requestWorker(request);
    const params = await ctx.params;
    const { chunk, attempt } = parseInput(Where, { ...queryOf(request), chunk: params.chunk });
    const body = await readBytes(request, MAX_BATCH_BYTES);
    return fresh(ingestBatch(worker, params.run, chunk, attempt, body));
  });
}
