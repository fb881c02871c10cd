/**
 * A commit's comparison with its parent is computed when its run ends, before anyone asks
 * (app/lib/review/compare-data.ts precomputeForRun, in a run pool thread): after the second commit's run is done,
 * the pair is ready without a visit, and the compare API then answers from it. Runs go through the route and the
 * real pool. The values themselves are checked in review-compare.test.ts.
 */
import { beforeAll, describe, expect, it, vi } from "vitest";
import { newNetwork, withRunFixture } from "../helpers/run-fixture";
import { pairSweep } from "../helpers/pair-sweep";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const t = withRunFixture();
let compareData: typeof import("@/app/lib/review/compare-data");

beforeAll(async () => {
  compareData = await import("@/app/lib/review/compare-data");
});

async function until(what: string, ok: () => boolean, ms = 30_000): Promise<void> {
  const end = Date.now() + ms;
  while (!ok()) {
    if (Date.now() > end) throw new Error(`${what}: not after ${ms} ms`);
    await new Promise((f) => setTimeout(f, 50));
  }
}

async function run(commit: string): Promise<string> {
  const r = await t.call("designer", "runs/route", "POST", "/api/runs", {}, { commit });
  expect(r.status).toBe(201);
  const id = (r.json as { run: { id: string } }).run.id;
  await t.supervisor.whenIdle();
  return id;
}

describe("a comparison computed when the run ends", () => {
  it("is ready for the parent → child pair before any visit, and the compare API answers from it", async () => {
    const made = await newNetwork(t, "Precompute pair", pairSweep(9));
    const network = { id: made.network };
    const commit = { id: made.commit };
    const fromRun = await run(commit.id);
    const next = await t.call(
      "designer",
      "networks/[id]/commits/route",
      "POST",
      `/api/networks/${network.id}/commits`,
      { id: network.id },
      {
        parent: commit.id,
        text: pairSweep(9).replace("drain=vdd\nnfet m2", "drain=vdd w=2u\nnfet m2"),
        message: "wider",
      },
    );
    expect(next.status).toBe(201);
    const child = (next.json as { commit: { id: string } }).commit.id;
    expect(compareData.comparisonReady(fromRun, fromRun)).toBe(false);
    const toRun = await run(child);
    await until("the pair's comparison", () => compareData.comparisonReady(fromRun, toRun));
    const r = await t.call(
      "viewer",
      "compare/route",
      "GET",
      `/api/compare?from=${commit.id}&to=${child}`,
      {},
      undefined,
    );
    expect(r.status).toBe(200);
    expect(JSON.stringify(r.json)).toContain(toRun);

    // Next bundles the compare page apart from the runs' code, each with its own copy of compare-data.ts: a fresh
    // copy of the module (as the page's bundle loads it) sees the comparison computed ahead, and the results diff
    vi.resetModules();
    const pageCopy = await import("@/app/lib/review/compare-data");
    expect(pageCopy).not.toBe(compareData);
    expect(pageCopy.comparisonReady(fromRun, toRun)).toBe(true);
  });
});
