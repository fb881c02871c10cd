/**
 * Next's start-up hook (runs once per server process, before any request):
 * runs left `running` by a stopped server are marked interrupted, and queued
 * runs are queued again, and one run worker thread is started (app/lib/run-supervisor.ts), and one thread
 * of the interactive pool (app/lib/interactive.ts), so the first commit does not wait for it to load.
 */
export async function register(): Promise<void> {
  if (process.env.NEXT_RUNTIME !== "nodejs" || process.env.NEXT_PHASE === "phase-production-build") return;
  const { recoverRuns, warmPool } = await import("./app/lib/run-supervisor");
  const { warmInteractivePool } = await import("./app/lib/interactive");
  try {
    await Promise.all([warmPool(), warmInteractivePool()]);
    const r = recoverRuns();
    if (r.interrupted || r.requeued || r.resumed)
      console.log(
        `runnel: ${r.interrupted} run(s) marked interrupted, ${r.requeued} queued again, ${r.resumed} resumed on the queue`,
      );
  } catch (e) {
    // A database that cannot be opened is reported by the start script and /api/health; do not crash start-up here.
    console.error(`runnel: could not recover runs: ${(e as Error).message}`);
  }
}
