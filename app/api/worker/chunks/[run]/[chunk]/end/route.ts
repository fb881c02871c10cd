import { z } from "zod";
import { fresh, handle, parseInput, readJson } from "@/app/lib/http";
import { endChunk } from "@/app/lib/run-ingest";
import { STOP_NONE } from "@/app/lib/run-chunk";
import { stopRedis } from "@/app/lib/run-queue-redis";
import { ChunkEnd } from "@/app/lib/run-wire";
import { requestWorker } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";
type Ctx = { params: Promise<{ run: string; chunk: string }> };

/**
 * POST /api/worker/chunks/[run]/[chunk]/end (worker token) `{ outcome, attempt, stats, flags | message }`: the chunk
 * is done (every point stored; 409 otherwise), stopped early, or failed (its message fails the run).
 */
export function POST(request: Request, ctx: Ctx) {
  return handle(async () => {
    const worker = requestWorker(request);
    const params = await ctx.params;
    const chunk = parseInput(z.coerce.number().int().min(0), params.chunk);
    const end = await readJson(request, ChunkEnd);
    const r = endChunk(worker, params.run, chunk, end);
    if (r.stop !== STOP_NONE) await stopRedis(params.run);
    return fresh(r);
  });
}
