/**
 * app/lib/worker-memory.ts: a thread's caches are dropped and the heap collected once it has been idle, and a
 * new task before then postpones it; the workers start without the server's TypeScript loader.
 */
import { EventEmitter } from "node:events";
import path from "node:path";
import { Piscina } from "piscina";
import { describe, expect, it } from "vitest";
import {
  collectWhenQuiet,
  POOL_ATOMICS,
  releaseWhenIdle,
  watchHeavyThreads,
  workerExecArgv,
  type HeavyThread,
} from "@/app/lib/worker-memory";

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe("releaseWhenIdle", () => {
  it("drops the caches after the idle time and gives the heap back", async () => {
    let cache: number[][] | null = Array.from({ length: 200 }, () =>
      Array.from({ length: 100_000 }, (_, i) => i + 0.5),
    );
    const held = process.memoryUsage().heapUsed;
    let drops = 0;
    releaseWhenIdle(
      () => {
        drops++;
        cache = null;
      },
      { afterMs: 50 },
    );
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
    releaseWhenIdle(() => drops++, { afterMs: 80 });
    await pause(50);
    releaseWhenIdle(() => drops++, { afterMs: 80 });
    await pause(50);
    expect(drops).toBe(0);
    await pause(80);
    expect(drops).toBe(1);
  });
});

describe("a thread that still holds much once idle", () => {
  it("asks its pool to replace it, and one that holds little does not", async () => {
    const heard: HeavyThread[] = [];
    watchHeavyThreads("run", (t) => heard.push(t));
    releaseWhenIdle(() => {}, { afterMs: 10, pool: "run", recycleAboveMb: 1e6 });
    await pause(150);
    expect(heard).toEqual([]);
    releaseWhenIdle(() => {}, { afterMs: 10, pool: "run", recycleAboveMb: 1 });
    for (let k = 0; k < 40 && heard.length === 0; k++) await pause(25);
    expect(heard).toHaveLength(1);
    expect(heard[0].pool).toBe("run");
    expect(heard[0].heldMb).toBeGreaterThan(1);
    // no pool named: never asks
    releaseWhenIdle(() => {}, { afterMs: 10, recycleAboveMb: 1 });
    await pause(150);
    expect(heard).toHaveLength(1);
  });
});

describe("collectWhenQuiet (the request thread)", () => {
  it("collects only once no request is in flight and the server has been quiet", async () => {
    const server = new EventEmitter();
    const stop = collectWhenQuiet(server as never, { quietMs: 150, growthMb: 16, checkMs: 20 });
    try {
      const res = new EventEmitter();
      server.emit("request", {}, res);
      let junk: number[][] | null = Array.from({ length: 100 }, () =>
        Array.from({ length: 100_000 }, (_, i) => i + 0.5),
      );
      expect(junk.length).toBe(100);
      junk = null;
      const held = process.memoryUsage().heapUsed;
      await pause(300);
      // a request is in flight: nothing collected (80 MB would be)
      expect(held - process.memoryUsage().heapUsed).toBeLessThan(30 * 1024 * 1024);
      res.emit("close");
      await pause(60);
      expect(held - process.memoryUsage().heapUsed).toBeLessThan(30 * 1024 * 1024);
      for (let k = 0; k < 40 && held - process.memoryUsage().heapUsed < 50 * 1024 * 1024; k++) await pause(25);
      expect(held - process.memoryUsage().heapUsed).toBeGreaterThan(50 * 1024 * 1024);
    } finally {
      stop();
    }
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
