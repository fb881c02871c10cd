/**
 * app/lib/worker-memory.ts: a thread's caches are dropped and the heap collected once it has been idle, and a
 * new task before then postpones it.
 */
import { describe, expect, it } from "vitest";
import { releaseWhenIdle } from "@/app/lib/worker-memory";

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe("releaseWhenIdle", () => {
  it("drops the caches after the idle time and gives the heap back", async () => {
    let cache: number[][] | null = Array.from({ length: 200 }, () =>
      Array.from({ length: 100_000 }, (_, i) => i + 0.5),
    );
    const held = process.memoryUsage().heapUsed;
    let drops = 0;
    releaseWhenIdle(() => {
      drops++;
      cache = null;
    }, 50);
    await pause(20);
    expect(drops).toBe(0);
    expect(cache).not.toBeNull();
    await pause(150);
    expect(drops).toBe(1);
    // 100 × 100,000 doubles: 80 MB that the collection frees at once (no allocation needed to trigger it).
    expect(held - process.memoryUsage().heapUsed).toBeGreaterThan(50 * 1024 * 1024);
  });

  it("a later call postpones the release", async () => {
    let drops = 0;
    releaseWhenIdle(() => drops++, 80);
    await pause(50);
    releaseWhenIdle(() => drops++, 80);
    await pause(50);
    expect(drops).toBe(0);
    await pause(80);
    expect(drops).toBe(1);
  });
});
