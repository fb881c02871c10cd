/** vitest globalSetup: bundles the run worker once, so tests that start runs load the current code. */
export default async function setup(): Promise<void> {
  const { buildWorker } = await import("../../scripts/build-worker.mjs");
  await buildWorker();
}
