/**
 * A pool thread that still holds a large task's memory once idle reports it (app/lib/worker-memory.ts), and the
 * interactive pool then replaces itself, which ends the thread (all it held goes back to the system): only when no
 * task is in it, only for one of its own threads, and the new pool serves the next task.
 */
import { BroadcastChannel } from "node:worker_threads";
import { afterAll, describe, expect, it } from "vitest";
import {
  checkTextInWorker,
  closeInteractivePool,
  interactiveThreadIds,
  warmInteractivePool,
} from "@/app/lib/interactive";
import { MEMORY_CHANNEL, type HeavyThread } from "@/app/lib/worker-memory";

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));
const channel = new BroadcastChannel(MEMORY_CHANNEL);
const report = (threadId: number) =>
  channel.postMessage({ pool: "interactive", threadId, heldMb: 500 } satisfies HeavyThread);

/** A chain of `n` devices: elaborating it keeps a pool thread busy for a while. */
function chain(n: number): string {
  return `network chain\nrail vdd = 0.8\nrail gnd = 0\nrail vg = 0.3\nfor k in 0..${n - 2} {\n  nfet m{k} gate=vg source=x{k+1} drain=x{k}\n}\nnfet top gate=vg source=x0 drain=vdd\nnfet bottom gate=vg source=gnd drain=x${n - 1}\n`;
}

afterAll(async () => {
  channel.close();
  await closeInteractivePool();
});

describe("the interactive pool replaces a thread that holds too much", () => {
  it("not while a task is in it, nor for a thread that is not its own; once idle, yes, and it still serves", async () => {
    await warmInteractivePool();
    const [first] = interactiveThreadIds();
    expect(first).toBeGreaterThan(0);

    const busy = checkTextInWorker(chain(100_000));
    await pause(20);
    report(first);
    await pause(100);
    expect(interactiveThreadIds()).toContain(first);
    const checked = await busy;
    expect(checked.ok).toBe(true);

    report(123_456);
    await pause(150);
    expect(interactiveThreadIds()).toContain(first);

    report(first);
    for (let k = 0; k < 80 && interactiveThreadIds().includes(first); k++) await pause(25);
    expect(interactiveThreadIds()).not.toContain(first);
    const again = await checkTextInWorker(chain(4));
    expect(again.ok).toBe(true);
    expect(interactiveThreadIds().length).toBeGreaterThan(0);
  }, 60_000);
});
