/**
 * The fair queue's order: workspaces alternate chunk by chunk, a newcomer
 * slots in behind the chunk being solved, a workspace's runs wait at its cap,
 * runs within a workspace go in order, and dropping a run forgets its chunks.
 */
import { describe, expect, it } from "vitest";
import { FairQueue } from "@/app/lib/fair-queue";

const drain = (q: FairQueue, n = Infinity) => {
  const out: string[] = [];
  for (let c = q.next(); c && out.length < n; c = out.length < n ? q.next() : null) out.push(`${c.runId}.${c.chunk}`);
  return out;
};

describe("FairQueue", () => {
  it("alternates two busy workspaces and admits a newcomer behind the chunk being solved", () => {
    const q = new FairQueue(() => 4);
    q.add({ id: "a1", workspaceId: "A", chunks: [0, 1, 2, 3] });
    q.add({ id: "a2", workspaceId: "A", chunks: [0, 1] });
    expect(drain(q, 2)).toEqual(["a1.0", "a1.1"]);
    // B arrives while A has four more chunks waiting: it goes next, then the two alternate.
    q.add({ id: "b1", workspaceId: "B", chunks: [0, 1, 2] });
    expect(drain(q)).toEqual(["b1.0", "a1.2", "b1.1", "a1.3", "b1.2", "a2.0", "a2.1"]);
  });

  it("holds a workspace's runs past its cap until one ends, oldest first", () => {
    const q = new FairQueue(() => 1);
    expect(q.add({ id: "a1", workspaceId: "A", chunks: [0] })).toHaveLength(1);
    expect(q.add({ id: "a2", workspaceId: "A", chunks: [0] })).toEqual([]);
    expect(q.add({ id: "a3", workspaceId: "A", chunks: [0] })).toEqual([]);
    expect(q.isWaiting("a2")).toBe(true);
    expect(drain(q)).toEqual(["a1.0"]);
    expect(q.ended("a1").map((c) => c.runId)).toEqual(["a2"]);
    expect(drain(q)).toEqual(["a2.0"]);
    expect(q.drop("a3")).toBe(true);
    expect(q.ended("a2")).toEqual([]);
    expect(q.size).toBe(0);
  });

  it("forgets the chunks of a dropped run and keeps the others in order", () => {
    const q = new FairQueue(() => 4);
    q.add({ id: "a1", workspaceId: "A", chunks: [0, 1, 2] });
    q.add({ id: "b1", workspaceId: "B", chunks: [0, 1, 2] });
    q.drop("a1");
    expect(q.isAdmitted("a1")).toBe(true);
    expect(drain(q)).toEqual(["b1.0", "b1.1", "b1.2"]);
  });

  it("numbers chunks from the clock after a worker elsewhere took one (queue priorities)", () => {
    const q = new FairQueue(() => 4);
    const a = q.add({ id: "a1", workspaceId: "A", chunks: [0, 1, 2, 3] });
    expect(a.map((c) => c.tag)).toEqual([2, 4, 6, 8]);
    q.advance(6);
    expect(q.add({ id: "b1", workspaceId: "B", chunks: [0, 1] }).map((c) => c.tag)).toEqual([7, 9]);
  });
});
