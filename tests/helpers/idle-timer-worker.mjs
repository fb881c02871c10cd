/* global setTimeout */
// A pool worker for tests/unit/worker-memory.test.ts: each task sets, after `afterMs` of idleness, a flag in the
// shared memory the task carries — as app/lib/worker-memory.ts's release timer does after a run's chunk.
export default function task({ flag, afterMs }) {
  const view = new Int32Array(flag);
  const timer = setTimeout(() => Atomics.store(view, 0, 1), afterMs);
  timer.unref();
  return "queued";
}
