/**
 * A pool thread that still holds a large task's memory once idle reports it (app/lib/worker-memory.ts), and its
 * pool (interactive, or the runs') then replaces itself, which ends the thread (all it held goes back to the
 * system): only when no task is in it, only for one of its own threads, and the new pool serves the next task.
 */
import { BroadcastChannel } from "node:worker_threads";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { newNetwork, withRunFixture } from "../helpers/run-fixture";
import { pairSweep } from "../helpers/pair-sweep";
import {
  checkTextInWorker,
  closeInteractivePool,
  interactiveThreadIds,
  warmInteractivePool,
} from "@/app/lib/interactive";
import { MEMORY_CHANNEL, type HeavyThread } from "@/app/lib/worker-memory";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));
const channel = new BroadcastChannel(MEMORY_CHANNEL);
const report = (threadId: number, pool: HeavyThread["pool"] = "interactive") =>
  channel.postMessage({ pool, threadId, heldMb: 500 } satisfies HeavyThread);

const t = withRunFixture();
let runPool: typeof import("@/app/lib/run-pool");

beforeAll(async () => {
  runPool = await import("@/app/lib/run-pool");
});

/** A chain of `n` devices: elaborating it keeps a pool thread busy for a while. */
function chain(n: number): string {
  return `network chain\nrail vdd = 0.8\nrail gnd = 0\nrail vg = 0.3\nfor k in 0..${n - 2} {\n  nfet m{k} gate=vg source=x{k+1} drain=x{k}\n}\nnfet top gate=vg source=x0 drain=vdd\nnfet bottom gate=vg source=gnd drain=x${n - 1}\n`;
}

afterAll(async () => {
  channel.close();
  await closeInteractivePool();
});

async function startRun(points: number): Promise<string> {
  const { commit } = await newNetwork(t, `Recycle ${points}`, pairSweep(points));
  const r = await t.call("designer", "runs/route", "POST", "/api/runs", {}, { commit });
  expect(r.status).toBe(201);
  return (r.json as { run: { id: string } }).run.id;
}

async function stateOf(id: string): Promise<string> {
  const r = await t.call("viewer", "runs/[id]/route", "GET", `/api/runs/${id}`, { id });
  return (r.json as { run: { state: string } }).run.state;
}

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

describe("the run pool replaces a thread that holds too much", () => {
  it("not while a run's chunk is in it; once idle, yes, and the next run is solved", async () => {
    await t.supervisor.warmPool();
    const [first] = runPool.localPoolThreadIds();
    expect(first).toBeGreaterThan(0);

    const busy = await startRun(20_000);
    for (let k = 0; k < 100 && (await stateOf(busy)) !== "running"; k++) await pause(20);
    report(first, "run");
    await pause(150);
    expect(runPool.localPoolThreadIds()).toContain(first);
    await t.supervisor.whenIdle();
    expect(await stateOf(busy)).toBe("done");

    report(first, "run");
    for (let k = 0; k < 80 && runPool.localPoolThreadIds().includes(first); k++) await pause(25);
    expect(runPool.localPoolThreadIds()).not.toContain(first);
    const next = await startRun(9);
    await t.supervisor.whenIdle();
    expect(await stateOf(next)).toBe("done");
  }, 120_000);
});
