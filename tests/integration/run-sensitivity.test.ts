/**
 * GET /api/runs/[id]/sensitivity: the run page's Sensitivity view. Its numbers are the core's
 * (`sensitivityJson`, checked against central differences and the pair's closed form in
 * tests/unit/sensitivity.test.ts); here: the route gives exactly them for the run's commit, as JSON and as CSV,
 * with the mismatch budget and the Monte Carlo σ beside it for a file with `mismatch`, and refuses a network past
 * its size limit with a clear message instead of computing it.
 */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import type { DB } from "@/db";
import { commits, networks, runs } from "@/db/schema";
import { elaborate } from "@/src/lang/index";
import { sensitivityJson } from "@/src/solver/design-json";
import { closeInteractivePool } from "@/app/lib/interactive";
import { SENSITIVITY_MAX_DEVICES, SENSITIVITY_TOP, sensitivityView } from "@/app/lib/sensitivity-view";
import { chainText } from "@/bench/workloads";
import { buildAccountsFixture, type AccountsFixture } from "../helpers/accounts";
import { apiCaller } from "../helpers/api";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

let fixture: AccountsFixture;
let db: DB;
let call: ReturnType<typeof apiCaller>;

beforeAll(() => {
  fixture = buildAccountsFixture();
  db = fixture.useCopy();
  call = apiCaller(fixture);
});
afterAll(async () => {
  await closeInteractivePool();
  fixture.dispose();
});

/** The newest seeded run of the demo network `name`, with its commit's text. */
function demoRun(name: string): { runId: string; text: string } {
  const row = db
    .select({ runId: runs.id, text: commits.text })
    .from(runs)
    .innerJoin(commits, eq(commits.id, runs.commitId))
    .innerJoin(networks, eq(networks.id, runs.networkId))
    .where(eq(networks.name, name))
    .all()
    .at(-1)!;
  return row;
}

const get = (runId: string, query = "") =>
  call("viewer", "runs/[id]/sensitivity/route", "GET", `/api/runs/${runId}/sensitivity${query}`, { id: runId });

describe("the Sensitivity view's route", () => {
  it("gives the core's sensitivities and budget of the run's network, with the Monte Carlo σ beside it", async () => {
    const { runId, text } = demoRun("Divider mismatch study");
    const r = await get(runId);
    expect(r.status).toBe(200);
    const body = r.json as unknown as ReturnType<typeof sensitivityJson> & { runId: string; probesLeftOut: number };
    const net = elaborate(text).network!;
    const direct = sensitivityJson(net, { top: SENSITIVITY_TOP, probes: net.probes.map((p) => p.name) });
    expect(body.runId).toBe(runId);
    expect(body.ok).toBe(true);
    expect(body.probesLeftOut).toBe(0);
    expect(JSON.parse(JSON.stringify(body.probes))).toEqual(JSON.parse(JSON.stringify(direct.probes)));
    const withBudget = body.probes.find((p) => p.budget !== null)!;
    expect(withBudget.budget!.sigma).toBeGreaterThan(0);
    expect(JSON.stringify(withBudget)).toContain("monte_carlo");
  });

  it("downloads the same as CSV: one row per probe and listed device, then the budget", async () => {
    const { runId } = demoRun("Divider mismatch study");
    const r = await call("viewer", "runs/[id]/sensitivity/route", "GET", `/api/runs/${runId}/sensitivity?format=csv`, {
      id: runId,
    });
    expect(r.status).toBe(200);
    const csv = r.text;
    expect(csv.split("\n")[0]).toBe("probe,kind,name,vt_per_mv,size,budget_share,budget_sigma");
    expect(csv).toMatch(/\n[a-z_]+,device,m\w+,/);
    expect(csv).toMatch(/,budget-device,/);
  });

  it("refuses a network past its size with a message naming the command line, without solving it", () => {
    const v = sensitivityView(chainText(SENSITIVITY_MAX_DEVICES / 2 + 10));
    expect(v.ok).toBe(false);
    expect(v.error).toMatch(
      /devices; this view computes networks of up to 500,000: use `runnel sensitivity FILE --json`/,
    );
  });
});
