/**
 * GET /api/runs/[id]/sensitivity: the run page's Sensitivity view. Its numbers are the core's
 * (`sensitivityJson`, checked against central differences and the pair's closed form in
 * tests/unit/sensitivity.test.ts); here: the route gives exactly them for the run's commit, as JSON and as CSV,
 * with the mismatch budget and the Monte Carlo σ beside it for a file with `mismatch`, and refuses a network past
 * its size limit with a clear message instead of computing it.
 */
import { eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";
import { commits, networks, runs } from "@/db/schema";
import { elaborate } from "@/src/lang/index";
import { seekJson, sensitivityJson } from "@/src/solver/design-json";
import {
  SEEK_MAX_SEARCHES,
  SENSITIVITY_MAX_DEVICES,
  SENSITIVITY_TOP,
  seekView,
  sensitivityView,
} from "@/app/lib/sensitivity-view";
import { chainText } from "@/bench/workloads";
import { apiFixtureForFile } from "../helpers/api";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const t = apiFixtureForFile();

/** The newest seeded run of the demo network `name`, with its commit's text. */
function demoRun(name: string): { runId: string; text: string } {
  const row = t.db
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
  t.call("viewer", "runs/[id]/sensitivity/route", "GET", `/api/runs/${runId}/sensitivity${query}`, { id: runId });

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
    const r = await t.call(
      "viewer",
      "runs/[id]/sensitivity/route",
      "GET",
      `/api/runs/${runId}/sensitivity?format=csv`,
      {
        id: runId,
      },
    );
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

describe("the Goal-seek view's route", () => {
  it("gives the file's seek statements as the core finds them: the demo spreading row's lateral gate for 6 taps", async () => {
    const { runId, text } = demoRun("LM-64 spreading row");
    const r = await t.call("viewer", "runs/[id]/seek/route", "GET", `/api/runs/${runId}/seek`, { id: runId });
    expect(r.status).toBe(200);
    const net = elaborate(text).network!;
    const s = net.seeks[0];
    const direct = seekJson(net, { param: s.param, low: s.from, high: s.to, probe: s.probe, target: s.target });
    expect(r.json).toEqual(JSON.parse(JSON.stringify({ ok: true, seeks: [direct], asked: [] })));
    expect(direct.points[0]).toMatchObject({ ok: true });
  });

  it("runs a seek a member asks for; a viewer may not, and a bracket without a crossing says the probe's range", async () => {
    const { runId } = demoRun("LM-64 spreading row");
    const spec = { param: "vh", low: 0.65, high: 0.7, probe: "lambda", target: 6 };
    const asViewer = await t.call(
      "viewer",
      "runs/[id]/seek/route",
      "POST",
      `/api/runs/${runId}/seek`,
      { id: runId },
      spec,
    );
    expect(asViewer.status).toBe(403);
    const r = await t.call("designer", "runs/[id]/seek/route", "POST", `/api/runs/${runId}/seek`, { id: runId }, spec);
    expect(r.status).toBe(200);
    const seek = (r.json as { seeks: { points: { ok: boolean; reason?: string; range?: unknown }[] }[] }).seeks[0];
    expect(seek.points[0]).toMatchObject({ ok: false, reason: "no-sign-change" });
    expect(seek.points[0].range).toBeDefined();
    // kept with the run: a viewer reads it, with who asked
    const listed = await t.call("viewer", "runs/[id]/seek/route", "GET", `/api/runs/${runId}/seek`, { id: runId });
    const asked = (listed.json as { asked: { id: string; createdByName: string; spec: unknown; view: unknown }[] })
      .asked;
    expect(asked.map((a) => a.id)).toEqual([(r.json as { id: string }).id]);
    expect(asked[0].spec).toEqual(spec);
    expect(asked[0].view).toEqual({ ok: true, seeks: (r.json as { seeks: unknown[] }).seeks });
    expect(asked[0].createdByName).toBeTruthy();
    const bad = await t.call(
      "designer",
      "runs/[id]/seek/route",
      "POST",
      `/api/runs/${runId}/seek`,
      { id: runId },
      {
        ...spec,
        low: "a lot",
      },
    );
    expect(bad.status).toBe(400);
    // a refused request stores nothing
    const again = await t.call("viewer", "runs/[id]/seek/route", "GET", `/api/runs/${runId}/seek`, { id: runId });
    expect((again.json as { asked: unknown[] }).asked).toHaveLength(1);
  });

  it("refuses a seek that would run more searches than the view allows, naming the command line", () => {
    const text = `network many
param vh = 0.7
param vv = 0.6
rail vdd = 1.8
rail gnd = 0
rail gh = vh
rail gv = vv
nfet m1 gate=gh source=x drain=vdd
nfet m2 gate=gv source=x drain=vdd
inject i from=x to=gnd value=1n
probe share = current(m1) / current(m2)
sweep vv from 0.5 to 0.7 points ${SEEK_MAX_SEARCHES + 1}
seek vh from=0.6 to=0.8 measure=share target=1
`;
    const v = seekView(text);
    expect(v.ok).toBe(false);
    expect(!v.ok && v.error).toMatch(/one search per point of the other sweeps: 201; this view runs up to 200/);
  });
});
