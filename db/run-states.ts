/**
 * The states of a run, with no other import, so that client components can read them too. A run is queued, then
 * running, then ends in one of the final states; the pages poll a run while it is live.
 */
export const RUN_STATES = ["queued", "running", "done", "failed", "canceled", "interrupted"] as const;
export type RunState = (typeof RUN_STATES)[number];
/** States a run never leaves. */
export const FINAL_RUN_STATES: readonly RunState[] = ["done", "failed", "canceled", "interrupted"];
/** States of a run that has not ended: pages poll it, and a cancel applies to it. */
export const LIVE_RUN_STATES: readonly RunState[] = ["queued", "running"];

/** Whether a run in `state` has not ended yet. */
export function isLive(state: string): boolean {
  return (LIVE_RUN_STATES as readonly string[]).includes(state);
}
