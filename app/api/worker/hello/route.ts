import { fresh, handle } from "@/app/lib/http";
import { CHUNKS_QUEUE, LOCK_MS, STALLED_MS, workspaceQueue } from "@/app/lib/queue-protocol";
import { requestWorker } from "@/app/lib/worker-tokens";

export const dynamic = "force-dynamic";

/**
 * GET /api/worker/hello (worker token): which queue this worker takes chunks from, and the lock and stall times
 * to use. Workers call it at start and every 30 s (it marks a workspace's own workers as present).
 */
export function GET(request: Request) {
  return handle(() => {
    const worker = requestWorker(request);
    return fresh({
      queue: worker.workspaceId === null ? CHUNKS_QUEUE : workspaceQueue(worker.workspaceId),
      workspace: worker.workspaceId,
      lockMs: LOCK_MS,
      stalledMs: STALLED_MS,
    });
  });
}
