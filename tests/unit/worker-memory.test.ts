/**
 * app/lib/worker-memory.ts: a thread's caches are dropped and the heap collected once it has been idle, and a
 * new task before then postpones it; the workers start without the server's TypeScript loader.
 */
import path from "node:path";
import { Piscina } from "piscina";
import { describe, expect, it } from "vitest";
import { POOL_ATOMICS, releaseWhenIdle, workerExecArgv } from "@/app/lib/worker-memory";

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

  it("fires in an idle thread of a pool made as the server makes its pools", async () => {
    // Piscina's default parks an idle thread in Atomics.wait, where no timer runs: the release never came.
    const pool = new Piscina({
      filename: path.resolve("tests/helpers/idle-timer-worker.mjs"),
      minThreads: 1,
      maxThreads: 1,
      atomics: POOL_ATOMICS,
    });
    try {
      const flag = new SharedArrayBuffer(4);
      expect(await pool.run({ flag, afterMs: 50 })).toBe("queued");
      const view = new Int32Array(flag);
      for (let k = 0; k < 40 && Atomics.load(view, 0) === 0; k++) await pause(25);
      expect(Atomics.load(view, 0)).toBe(1);
    } finally {
      await pool.destroy();
    }
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

describe("workerExecArgv", () => {
  it("drops the TypeScript loader and keeps every other option", () => {
    expect(workerExecArgv(["--import", "tsx", "--max-old-space-size=4096"])).toEqual(["--max-old-space-size=4096"]);
    expect(workerExecArgv(["--import=tsx", "--cpu-prof", "--cpu-prof-dir=/tmp/p"])).toEqual([
      "--cpu-prof",
      "--cpu-prof-dir=/tmp/p",
    ]);
    expect(workerExecArgv(["--require", "/app/node_modules/tsx/dist/cjs/index.cjs", "--inspect"])).toEqual([
      "--inspect",
    ]);
    // another loader, and an option that only mentions tsx in a value, stay
    expect(workerExecArgv(["--import", "./trace.mjs", "--title=tsx-server"])).toEqual([
      "--import",
      "./trace.mjs",
      "--title=tsx-server",
    ]);
    expect(workerExecArgv([])).toEqual([]);
  });
});
