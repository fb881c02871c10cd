import { z } from "zod";
import { fresh, handle, readJson } from "@/app/lib/http";
import { claimChunk } from "@/app/lib/run-ingest";
import { faultOf, noteClaim } from "@/app/lib/run-queue-redis";
import { requestWorker } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";

const Claim = z.object({ runId: z.string().min(1).max(100), chunk: z.number().int().min(0) });

/**
 * POST /api/worker/claims (worker token) `{ runId, chunk }`: hands the chunk out under this token at a new attempt;
 * the answer has what solving it needs. 409 when the run is not running or is stopping (skip the chunk), 404 for a
 * run this token does not serve.
 */
export function POST(request: Request) {
  return handle(async () => {
    const worker = requestWorker(request);
    const { runId, chunk } = await readJson(request, Claim);
    const fault = process.env.RUNNEL_TEST_FAULTS === "1" ? await faultOf(runId) : undefined;
    const claim = claimChunk(worker, runId, chunk, fault);
    await noteClaim(runId, claim.tag, claim.deadline);
    return fresh({ claim });
  });
}
