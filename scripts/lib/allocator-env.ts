/**
 * The C allocator's settings for the server process (glibc reads them at start-up, so they are set in the
 * environment of the child process that runs the server). Each worker thread that solved or exported a large
 * run left its freed buffers in an allocator arena of its own, which glibc keeps rather than giving back:
 * after the stall workload of `npm run bench:api` (a 2,000,000-device run, its exports, a million-row CSV)
 * the server stayed at 0.9 GB against 0.3 GB idle. Two arenas shared by all threads, trimmed once 128 kB is
 * free at the top, brought that to 0.5 GB (README, Performance). An operator's own value of either wins.
 */
export const ALLOCATOR_ENV: Readonly<Record<string, string>> = {
  MALLOC_ARENA_MAX: "2",
  MALLOC_TRIM_THRESHOLD_: "131072",
};

/** `ALLOCATOR_ENV` without the settings `env` already has. */
export function allocatorEnv(env: NodeJS.ProcessEnv = process.env): Record<string, string> {
  return Object.fromEntries(Object.entries(ALLOCATOR_ENV).filter(([k]) => env[k] === undefined));
}
