/**
 * app/lib/run-plan.ts chunkRanges: a run's points split into contiguous chunks that cover every point once, about
 * CHUNK_TARGET_MS of solving each, at least one per worker once each would get CHUNK_MIN_MS, and a whole number of
 * chunks per worker while there are few (so no thread idles through the last round).
 */
import { describe, expect, it } from "vitest";
import { CHUNK_MIN_MS, CHUNK_TARGET_MS, chunkRanges } from "@/app/lib/run-plan";

function covers(points: number, chunks: { start: number; end: number }[]): void {
  expect(chunks[0].start).toBe(0);
  expect(chunks.at(-1)!.end).toBe(points);
  for (let k = 1; k < chunks.length; k++) expect(chunks[k].start).toBe(chunks[k - 1].end);
  for (const c of chunks) expect(c.end).toBeGreaterThan(c.start);
}

describe("chunkRanges", () => {
  it("keeps a run too small to share in one chunk", () => {
    expect(chunkRanges(9, 1, 2)).toEqual([{ start: 0, end: 9 }]);
    expect(chunkRanges(1, 10_000, 4)).toEqual([{ start: 0, end: 1 }]);
  });

  it("gives each worker a chunk once every chunk would get CHUNK_MIN_MS", () => {
    const points = 100;
    const pointMs = (2 * CHUNK_MIN_MS) / points; // total 2 × CHUNK_MIN_MS
    const chunks = chunkRanges(points, pointMs, 2);
    expect(chunks).toHaveLength(2);
    covers(points, chunks);
  });

  it("rounds a few chunks up to a whole number per worker", () => {
    // 2,000 samples of 3.6 ms: 7.2 s, 8 chunks of ~0.9 s on 2 workers; 5 s → 5 chunks → 6 on 2 workers.
    const five = chunkRanges(2_000, (4.5 * CHUNK_TARGET_MS) / 2_000, 2);
    expect(five).toHaveLength(6);
    covers(2_000, five);
    expect(chunkRanges(2_000, (4.5 * CHUNK_TARGET_MS) / 2_000, 4)).toHaveLength(8);
  });

  it("leaves many chunks near CHUNK_TARGET_MS each, near-equal, never more than the points", () => {
    const chunks = chunkRanges(10_000, 4, 2); // 40 s
    expect(chunks).toHaveLength(40);
    covers(10_000, chunks);
    const sizes = chunks.map((c) => c.end - c.start);
    expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
    expect(chunkRanges(3, 10_000, 8)).toHaveLength(3);
  });
});
