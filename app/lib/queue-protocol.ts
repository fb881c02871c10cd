/**
 * What the app and its queue workers agree on (RUNNEL_QUEUE=redis): queue
 * names, lock and stall times, the stop event, the worker token's prefix.
 * No imports: queue workers load it without the app's database.
 */

/** Parent jobs (one per run and generation), processed by the app. */
export const RUNS_QUEUE = "runnel-runs";
/** Chunks for operator-token workers (every workspace). */
export const CHUNKS_QUEUE = "runnel-chunks";
/** Chunks for a workspace's own workers. */
export const workspaceQueue = (workspaceId: string) => `runnel-chunks-${workspaceId}`;
/** Lock time and stalled-job check of chunk jobs: a lost worker's chunk is handed out again within about 5–15 s. */
export const LOCK_MS = 5_000;
export const STALLED_MS = 5_000;
/** The queue event that tells workers to abort a run's chunks. */
export const STOP_EVENT = "runnel-stop";
export const WORKER_TOKEN_PREFIX = "runnel_worker_";
