/**
 * GET /api/commits/[id]/structure: the network page's Structure view, read in the interactive pool. The demo's
 * edge row (a known topology: lattice devices lat{k} from x{k} to x{k+1}, outputs out{k} from x{k} to the drain
 * rail) answers with each node's devices and the graph to draw; a 200,000-device chain answers with capped,
 * counted rows and no drawing; a text with errors is a 422 that says so.
 */
import { eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";
import { commits, networks } from "@/db/schema";
import { createNetwork } from "@/app/lib/networks";
import { GRAPH_LIMIT, ROW_LIMIT, type StructureView } from "@/app/lib/structure";
import { chainText } from "@/bench/workloads";
import { apiFixtureForFile } from "../helpers/api";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const t = apiFixtureForFile();

const get = (commitId: string, q: string) =>
  t.call("viewer", "commits/[id]/structure/route", "GET", `/api/commits/${commitId}/structure?q=${q}`, {
    id: commitId,
  });

function headOf(name: string): { commitId: string; workspaceId: string } {
  const n = t.db.select().from(networks).where(eq(networks.name, name)).get()!;
  return { commitId: n.headCommitId!, workspaceId: n.workspaceId };
}

describe("the Structure view's route", () => {
  it("lists a node's devices and draws a small network", async () => {
    const r = await get(headOf("LM-64 edge row").commitId, "x5");
    expect(r.status).toBe(200);
    const s = (r.json as unknown as { structure: StructureView }).structure;
    const x5 = s.nodes.rows.find((n) => n.name === "x5")!;
    expect(x5.rail).toBe(false);
    expect(x5.elements).toEqual(expect.arrayContaining(["lat4", "lat5", "out5"]));
    expect(s.devices.rows.map((d) => d.name)).toEqual(expect.arrayContaining(["lat4", "lat5", "out5"]));
    const lat4 = s.devices.rows.find((d) => d.name === "lat4")!;
    expect([lat4.source, lat4.drain].sort()).toEqual(["x4", "x5"]);
    expect(s.graph).not.toBeNull();
    expect(s.graph!.devices.length).toBe(s.devices.total);
  });

  it("answers a 200,000-device chain with capped, counted rows and no drawing", async () => {
    const { workspaceId } = headOf("LM-64 edge row");
    const authorId = t.fixture.actors.designer!.userId;
    const { commit } = createNetwork({ workspaceId, name: "Long chain", text: chainText(100_000), authorId }, t.db);
    const r = await get(commit!.id, "n9999");
    expect(r.status).toBe(200);
    const s = (r.json as unknown as { structure: StructureView }).structure;
    expect(s.devices.total).toBe(199_999);
    expect(s.graph).toBeNull(); // more than GRAPH_LIMIT devices
    expect(s.devices.total).toBeGreaterThan(GRAPH_LIMIT);
    // n9999, n99990 … n99999: 11 nodes; the devices touching them: o and h at each, and h9998 before n9999
    expect(s.nodes.matched).toBe(11);
    expect(s.nodes.rows.map((n) => n.name)).toContain("n99999");
    const all = await get(commit!.id, "");
    const whole = (all.json as unknown as { structure: StructureView }).structure;
    expect(whole.devices.rows.length).toBe(ROW_LIMIT);
    expect(whole.devices.matched).toBe(199_999);
  });

  it("refuses a text with errors with a 422 that says so", async () => {
    const { workspaceId } = headOf("LM-64 edge row");
    const authorId = t.fixture.actors.designer!.userId;
    const { commit } = createNetwork(
      { workspaceId, name: "Broken", text: "network broken\nnfet m gate=nowhere\n", authorId },
      t.db,
    );
    const r = await get(commit!.id, "");
    expect(r.status).toBe(422);
    expect(JSON.stringify(r.json)).toContain("has errors");
    expect(t.db.select().from(commits).where(eq(commits.id, commit!.id)).get()).toBeDefined();
  });
});
