/**
 * Commit → run → results through the route handlers, as each role; cancel;
 * the time limit; a run that throws in the worker; a server restart. Runs
 * execute in the real piscina pool over the bundled worker (.build/run-worker.mjs,
 * built by the vitest globalSetup). RUNNEL_TEST_FAULTS=1 enables the worker's
 * test hooks ("slow": 25 ms per point, "throw": throws after the first point,
 * "stuck": spins inside a point, deaf to stop requests).
 *
 * Physics check: the divider's probe `ratio` = I1/I2 = exp(κ·Δv/U_T) for a
 * differential pair in weak inversion with saturated drains (Vittoz &
 * Arreguit 1993, docs/physics.md §3 Pseudo-voltages [confirmed]); here it checks that stored values
 * come back from the API unchanged, not the solver, which has its own tests.
 */
import { eq, isNotNull } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it, onTestFinished, vi } from "vitest";
import type { DB } from "@/db";
import { networks, runs } from "@/db/schema";
import { decodePoint } from "@/app/lib/point-codec";
import { buildAccountsFixture, type AccountsFixture, type Who } from "../helpers/accounts";
import { apiCaller } from "../helpers/api";
import { SITE } from "../helpers/request-context";
import { chainText } from "@/bench/workloads";
import { pairSweep } from "../helpers/pair-sweep";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const SWEEP = pairSweep(9);
/** 200 points, for runs that must still be running when the test acts (with the "slow" hook: about 5 s). */
const LONG = SWEEP.replace("points 9", "points 200");

let fixture: AccountsFixture;
let db: DB;
let runsLib: typeof import("@/app/lib/run-supervisor");

beforeAll(async () => {
  process.env.RUNNEL_TEST_FAULTS = "1";
  fixture = buildAccountsFixture();
  db = fixture.useCopy();
  call = apiCaller(fixture);
  runsLib = await import("@/app/lib/run-supervisor");
});

afterAll(async () => {
  await runsLib.whenIdle();
  await runsLib.closePool();
  fixture.dispose();
  delete process.env.RUNNEL_TEST_FAULTS;
});

let call: ReturnType<typeof apiCaller>;

async function newNetwork(name: string, text: string): Promise<{ networkId: string; commitId: string }> {
  const r = await call(
    "designer",
    "w/[slug]/networks/route",
    "POST",
    "/api/w/lm64-edge-row/networks",
    { slug: "lm64-edge-row" },
    { name, text, message: "for the test" },
  );
  expect(r.status).toBe(201);
  const body = r.json as { network: { id: string }; commit: { id: string } };
  return { networkId: body.network.id, commitId: body.commit.id };
}

async function startRun(who: Who, body: Record<string, unknown>) {
  return call(who, "runs/route", "POST", "/api/runs", {}, body);
}

type RunJson = { id: string; state: string; reason: string | null; pointsDone: number; pointsTotal: number };

async function runOf(id: string): Promise<RunJson> {
  const r = await call("viewer", "runs/[id]/route", "GET", `/api/runs/${id}`, { id });
  expect(r.status).toBe(200);
  return (r.json as { run: RunJson }).run;
}

/** Polls the run until `done(run)`; fails after `ms`. */
async function until(id: string, done: (r: RunJson) => boolean, ms = 30_000): Promise<RunJson> {
  const end = Date.now() + ms;
  for (;;) {
    const r = await runOf(id);
    if (done(r)) return r;
    if (Date.now() > end)
      throw new Error(`run ${id} still ${r.state} (${r.pointsDone}/${r.pointsTotal}) after ${ms} ms`);
    await new Promise((f) => setTimeout(f, 100));
  }
}
const ended = (r: RunJson) => !["queued", "running"].includes(r.state);

describe("runs through the API", () => {
  it("runs every demo network again in-process with no Redis configured (the default: no extra service)", async () => {
    // as a fresh clone's demo has it, whatever this shell says
    const saved = { queue: process.env.RUNNEL_QUEUE, url: process.env.REDIS_URL };
    delete process.env.RUNNEL_QUEUE;
    delete process.env.REDIS_URL;
    onTestFinished(() => {
      if (saved.queue !== undefined) process.env.RUNNEL_QUEUE = saved.queue;
      if (saved.url !== undefined) process.env.REDIS_URL = saved.url;
    });
    expect(runsLib.queueMode()).toBe("local");
    const heads = db
      .select({ name: networks.name, head: networks.headCommitId })
      .from(networks)
      .where(isNotNull(networks.headCommitId))
      .all();
    expect(heads.length).toBeGreaterThanOrEqual(7);
    const started = await Promise.all(
      heads.map(async (n) => {
        const r = await startRun("designer", { commit: n.head });
        expect(r.status, `${n.name}: ${r.text}`).toBe(201);
        return { name: n.name, id: (r.json as { run: { id: string } }).run.id };
      }),
    );
    for (const s of started) {
      const r = await until(s.id, ended, 120_000);
      expect([s.name, r.state, r.pointsDone]).toEqual([s.name, "done", r.pointsTotal]);
    }
  }, 180_000);

  it("commit → run → results, as each role", async () => {
    const { networkId, commitId } = await newNetwork("Split sweep", SWEEP);
    // commit a second version as the owner; a reviewer and a viewer cannot commit
    const text2 = SWEEP.replace("value=20n", "value=40n");
    const commitAs = (who: Who) =>
      call(
        who,
        "networks/[id]/commits/route",
        "POST",
        `/api/networks/${networkId}/commits`,
        { id: networkId },
        { parent: commitId, text: text2, message: "double the tail" },
      );
    expect((await commitAs("viewer")).status).toBe(403);
    expect((await commitAs("reviewer")).status).toBe(403);
    expect((await commitAs("outsider")).status).toBe(404);
    expect((await commitAs("anonymous")).status).toBe(401);
    const c2 = await commitAs("owner");
    expect(c2.status).toBe(201);
    const commit2 = (c2.json as { commit: { id: string; parentId: string } }).commit;
    expect(commit2.parentId).toBe(commitId);

    expect((await startRun("viewer", { commit: commit2.id })).status).toBe(403);
    expect((await startRun("outsider", { commit: commit2.id })).status).toBe(404);
    expect((await startRun("anonymous", { commit: commit2.id })).status).toBe(401);
    const asReviewer = await startRun("reviewer", { commit: commit2.id });
    expect(asReviewer.status).toBe(201);
    const asDesigner = await startRun("designer", { commit: commit2.id });
    expect(asDesigner.status).toBe(201);
    const run = (asDesigner.json as { run: RunJson }).run;
    expect(run.pointsTotal).toBe(9);
    // a free pool thread may have claimed it before the answer was written
    expect(["queued", "running"]).toContain(run.state);
    const done = await until(run.id, ended);
    expect(done).toMatchObject({ state: "done", pointsDone: 9, reason: null });
    expect((await until((asReviewer.json as { run: RunJson }).run.id, ended)).state).toBe("done");

    // results, read by a viewer
    const series = await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${run.id}/results?view=series`, {
      id: run.id,
    });
    expect(series.status).toBe(200);
    const s = (
      series.json as {
        series: {
          probes: string[];
          params: string[];
          paramValues: number[][];
          probeValues: number[][];
          method: string[];
        };
      }
    ).series;
    expect(s.probes).toEqual(["ratio"]);
    // a second read comes from the per-run cache and says the same
    expect(
      (
        await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${run.id}/results?view=series`, {
          id: run.id,
        })
      ).json,
    ).toEqual(series.json);
    expect((series.json as { run: { state: string } }).run.state).toBe("done");
    // what the run page asks for: the same series with its numbers at 7 significant digits, whole or in part
    const round7 = (x: unknown): unknown =>
      typeof x === "number"
        ? Number.isFinite(x) && !Number.isInteger(x)
          ? Number(x.toPrecision(7))
          : x
        : Array.isArray(x)
          ? x.map(round7)
          : x && typeof x === "object"
            ? Object.fromEntries(Object.entries(x).map(([k, v]) => [k, round7(v)]))
            : x;
    for (const range of ["", "&from=2&to=6"]) {
      const url = `/api/runs/${run.id}/results?view=series${range}`;
      const full = await call("viewer", "runs/[id]/results/route", "GET", url, { id: run.id });
      const seven = await call("viewer", "runs/[id]/results/route", "GET", `${url}&digits=7`, { id: run.id });
      expect(seven.status).toBe(200);
      expect(seven.json).toEqual(round7(full.json));
      expect(seven.json).not.toEqual(full.json);
    }
    expect(
      (
        await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${run.id}/results?view=series&digits=2`, {
          id: run.id,
        })
      ).status,
    ).toBe(400);
    // a range that ends before it starts is a bad request, not an empty answer
    const backwards = await call(
      "viewer",
      "runs/[id]/results/route",
      "GET",
      `/api/runs/${run.id}/results?view=series&from=5&to=1`,
      { id: run.id },
    );
    expect(backwards.status).toBe(400);
    expect((backwards.json as { error: string }).error).toMatch(/^from: .*from=5, to=1/);
    const dv = s.paramValues[s.params.indexOf("dv")];
    expect(dv).toHaveLength(9);
    expect(dv[0]).toBeCloseTo(-0.04, 12);
    expect(s.method.every((m) => m === "linear")).toBe(true);
    // the ratio grows with dv and is 1 at dv = 0 (symmetric pair)
    expect(s.probeValues[0][4]).toBeCloseTo(1, 9);
    expect(s.probeValues[0][8]).toBeGreaterThan(s.probeValues[0][0]);

    const point = await call(
      "viewer",
      "runs/[id]/results/route",
      "GET",
      `/api/runs/${run.id}/results?view=point&point=8`,
      { id: run.id },
    );
    const p = (
      point.json as {
        point: {
          nodes: { names: string[]; voltage: number[] };
          devices: { names: string[]; current: number[] };
          probes: { value: number[] };
        };
      }
    ).point;
    expect(p.devices.names).toEqual(["m1", "m2"]);
    expect(p.devices.current[0] + p.devices.current[1]).toBeCloseTo(40e-9, 15);
    expect(point.json.point).not.toHaveProperty("page"); // the whole point fits
    // a window of the tables, with a note saying what it left out
    const second = await call(
      "viewer",
      "runs/[id]/results/route",
      "GET",
      `/api/runs/${run.id}/results?view=point&point=8&offset=1&limit=1`,
      { id: run.id },
    );
    const w = (second.json as { point: { devices: { names: string[] }; page: { note: string; devices: number } } })
      .point;
    expect(w.devices.names).toEqual(["m2"]);
    expect(w.page).toMatchObject({ devices: 2 });
    expect(w.page.note).toMatch(/^this view holds nodes .* and devices 1–2 of 2; ask for more with offset=/);
    expect(p.probes.value[0]).toBeCloseTo(s.probeValues[0][8], 12);
    // the binary form the run page reads carries the same numbers; the names come once, from view=layout
    const mod = await import("@/app/api/runs/[id]/results/route");
    const binRes = await mod.GET(
      new Request(`${SITE}/api/runs/${run.id}/results?view=point&point=8&format=binary`, {
        headers: { cookie: fixture.actors.viewer!.cookie },
      }),
      { params: Promise.resolve({ id: run.id }) },
    );
    expect(binRes.headers.get("content-type")).toBe("application/octet-stream");
    const bin = decodePoint(await binRes.arrayBuffer());
    expect(Array.from(bin.current)).toEqual(p.devices.current);
    expect(bin.probes[0]).toBe(p.probes.value[0]);
    const layout = await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${run.id}/results?view=layout`, {
      id: run.id,
    });
    expect((layout.json as { layout: { devices: string[] } }).layout.devices).toEqual(["m1", "m2"]);
    expect(
      (
        await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${run.id}/results?view=point&point=99`, {
          id: run.id,
        })
      ).status,
    ).toBe(404);
    expect(
      (
        await call("outsider", "runs/[id]/results/route", "GET", `/api/runs/${run.id}/results?view=series`, {
          id: run.id,
        })
      ).status,
    ).toBe(404);

    // exports
    const csv = await call("viewer", "runs/[id]/export/route", "GET", `/api/runs/${run.id}/export?format=csv`, {
      id: run.id,
    });
    expect(csv.status).toBe(200);
    expect(csv.headers.get("content-type")).toMatch(/text\/csv/);
    const lines = csv.text.trim().split("\r\n");
    expect(lines[0]).toBe("point,sample,dv,temp,ratio,method,iterations,residual_A,error");
    expect(csv.text).not.toContain("#"); // a run that ended done is complete: no note
    expect(lines).toHaveLength(10);
    expect(Number(lines[9].split(",")[4])).toBeCloseTo(s.probeValues[0][8], 12);
    const devicesCsv = await call(
      "viewer",
      "runs/[id]/export/route",
      "GET",
      `/api/runs/${run.id}/export?format=csv&table=devices&point=0`,
      { id: run.id },
    );
    expect(devicesCsv.text.trim().split("\r\n")).toEqual([
      expect.stringMatching(/^point,sample,device,type,current_A/),
      expect.stringMatching(/^0,0,m1,nfet,/),
      expect.stringMatching(/^0,0,m2,nfet,/),
    ]);
    const json = await call("viewer", "runs/[id]/export/route", "GET", `/api/runs/${run.id}/export?format=json`, {
      id: run.id,
    });
    const doc = json.json as {
      network: string;
      ok: boolean;
      points: {
        params: Record<string, number>;
        devices: Record<string, { current: number }>;
        probes: Record<string, number>;
        solver: { method: string };
      }[];
    };
    expect(doc.network).toBe("split");
    expect(doc).not.toHaveProperty("partial");
    expect(doc.ok).toBe(true);
    expect(doc.points).toHaveLength(9);
    expect(doc.points[8].probes.ratio).toBeCloseTo(s.probeValues[0][8], 12);
    expect(Object.keys(doc.points[0].params)).toEqual(["dv"]);

    // the commit's text downloads as a file; the run lists under its commit
    const dl = await call("viewer", "commits/[id]/route", "GET", `/api/commits/${commit2.id}?download`, {
      id: commit2.id,
    });
    expect(dl.text).toBe(text2);
    expect(dl.headers.get("content-disposition")).toMatch(/attachment; filename="split-sweep-[0-9a-f]{12}\.runnel"/);
    const list = await call("viewer", "runs/route", "GET", `/api/runs?commit=${commit2.id}`);
    expect((list.json as { runs: RunJson[] }).runs.map((r) => r.id)).toContain(run.id);
  });

  it("a network whose names are larger than a plan carries gets its layout from the run's first chunk", async () => {
    // 60,000 outputs and 59,999 links: over a megabyte of names, more than PLAN_LAYOUT_BYTES (app/lib/text-check.ts).
    const n = 60_000;
    const text = chainText(n);
    const { planNetworkText } = await import("@/app/lib/text-check");
    expect(planNetworkText(text, 1)!.layout).toBeNull();
    const { commitId } = await newNetwork("Wide chain", text);
    const started = await startRun("designer", { commit: commitId });
    expect(started.status).toBe(201);
    const id = (started.json as { run: { id: string } }).run.id;
    const r = await until(id, ended, 60_000);
    expect(r.state).toBe("done");
    const layout = await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${id}/results?view=layout`, {
      id,
    });
    const l = (layout.json as { layout: { devices: string[]; nodes: string[]; deviceCount: number } }).layout;
    expect(l.devices).toHaveLength(2 * n - 1);
    expect(l.deviceCount).toBe(2 * n - 1);
    expect(l.devices[0]).toBe("o0");
    expect(l.nodes).toContain(`n${n - 1}`);
    const point = await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${id}/results?view=point&limit=3`, {
      id,
    });
    const p = point.json as { point: { devices: { names: string[] }; page: { devices: number } } };
    expect(p.point.devices.names).toEqual(["o0", "o1", "o2"]);
    expect(p.point.page.devices).toBe(2 * n - 1);
  }, 90_000);

  it("refuses up front, with the numbers: a commit with errors, too many points, too many values", async () => {
    const broken = await newNetwork("Broken split", `${SWEEP}nfet m3 gate=nowhere\n`);
    const r1 = await startRun("designer", { commit: broken.commitId });
    expect(r1.status).toBe(422);
    expect(r1.json.error).toMatch(/has \d+ errors?: fix/);
    const many = await newNetwork("Many points", SWEEP.replace("points 9", "points 25000"));
    const r2 = await startRun("designer", { commit: many.commitId });
    expect(r2.status).toBe(422);
    expect(r2.json).toMatchObject({ points: 25_000, limit: 20_000 });
    expect(r2.json.error).toMatch(/25,000 points; the limit is 20,000 points per run/);
    const wide = `rail vdd = 1.8\nrail gnd = 0\nrail g = 0.7\nparam i = 1n\nfor k in 0..1999 {\n  nfet d{k} gate=g source=x{k} drain=x{k+1}\n  nfet o{k} gate=g source=x{k} drain=vdd\n}\ninject src from=x0 to=gnd value=i\nsweep i from 1n to 2n points 10000\n`;
    const big = await newNetwork("Wide row", wide);
    const r3 = await startRun("designer", { commit: big.commitId });
    expect(r3.status).toBe(422);
    expect(r3.json.error).toMatch(/would store [\d,]+ values .* the limit is 50,000,000 values per run/);
    expect(r3.json.values as number).toBeGreaterThan(50_000_000);
    expect((await startRun("designer", { commit: "no-such-commit" })).status).toBe(404);
    expect((await startRun("designer", { commit: broken.commitId, timeLimitSeconds: -1 })).status).toBe(400);
  });

  it("cancels a running run, keeping the points done", async () => {
    const { commitId } = await newNetwork("Cancel me", LONG);
    const start = await startRun("designer", { commit: commitId, fault: "slow" });
    const id = (start.json as { run: RunJson }).run.id;
    await until(id, (r) => r.state === "running" && r.pointsDone > 0);
    expect((await call("viewer", "runs/[id]/cancel/route", "POST", `/api/runs/${id}/cancel`, { id })).status).toBe(403);
    const c = await call("reviewer", "runs/[id]/cancel/route", "POST", `/api/runs/${id}/cancel`, { id });
    expect(c.status).toBe(200);
    const r = await until(id, ended);
    expect(r.state).toBe("canceled");
    expect(r.pointsDone).toBeGreaterThan(0);
    expect(r.pointsDone).toBeLessThan(200);
    expect(r.reason).toBe(`canceled after ${r.pointsDone} of 200 points`);
    const series = await call("viewer", "runs/[id]/results/route", "GET", `/api/runs/${id}/results?view=series`, {
      id,
    });
    expect((series.json as { series: { point: number[] } }).series.point).toHaveLength(r.pointsDone);
    // its exports say that they hold only part of the run
    const note = `run ${id} is canceled (canceled after ${r.pointsDone} of 200 points): this file holds the ${r.pointsDone} of 200 points stored so far, not a complete result`;
    const csv = await call("viewer", "runs/[id]/export/route", "GET", `/api/runs/${id}/export?format=csv`, { id });
    expect(csv.text.split("\r\n")[0]).toBe(`# ${note}`);
    expect(csv.text.trim().split("\r\n")).toHaveLength(2 + r.pointsDone);
    const json = await call("viewer", "runs/[id]/export/route", "GET", `/api/runs/${id}/export?format=json`, { id });
    expect(json.json).toMatchObject({ partial: note, run: { state: "canceled" } });
    expect((json.json as { points: unknown[] }).points).toHaveLength(r.pointsDone);
    const again = await call("designer", "runs/[id]/cancel/route", "POST", `/api/runs/${id}/cancel`, { id });
    expect(again.status).toBe(409);
    expect(again.json.error).toBe("the run has already ended (canceled)");
  });

  it("ends a run at its time limit as failed, with the reason", async () => {
    const { commitId } = await newNetwork("Too slow", LONG);
    const start = await startRun("designer", { commit: commitId, fault: "slow", timeLimitSeconds: 0.5 });
    const r = await until((start.json as { run: RunJson }).run.id, ended);
    expect(r.state).toBe("failed");
    expect(r.reason).toMatch(new RegExp(`^time limit of 0\\.5 s reached after ${r.pointsDone} of 200 points$`));
    expect(r.pointsDone).toBeLessThan(200);
  });

  it("terminates a worker that ignores the time limit, and the next run still gets a worker", async () => {
    const { commitId } = await newNetwork("Stuck", SWEEP);
    const start = await startRun("designer", { commit: commitId, fault: "stuck", timeLimitSeconds: 0.5 });
    const r = await until((start.json as { run: RunJson }).run.id, ended, 20_000);
    expect(r.state).toBe("failed");
    expect(r.reason).toBe("time limit of 0.5 s reached; the worker was stopped");
    const next = await startRun("designer", { commit: commitId });
    expect((await until((next.json as { run: RunJson }).run.id, ended)).state).toBe("done");
  });

  it("ends a run that throws in the worker as failed, with the message", async () => {
    const { commitId } = await newNetwork("Throws", SWEEP);
    const start = await startRun("designer", { commit: commitId, fault: "throw" });
    const r = await until((start.json as { run: RunJson }).run.id, ended);
    expect(r.state).toBe("failed");
    expect(r.reason).toBe("the run failed: test fault: the solver threw at point 1");
  });

  it("after a restart, marks running runs interrupted and runs the queued ones", async () => {
    const { networkId, commitId } = await newNetwork("Restarted", SWEEP);
    await runsLib.whenIdle();
    // What a server that stopped mid-run leaves behind: one run running, one queued.
    db.insert(runs)
      .values({
        id: "r_was_running",
        commitId,
        networkId,
        workspaceId: "ws_lm64",
        createdBy: "u_designer1",
        state: "running",
        pointsTotal: 9,
        pointsDone: 4,
        timeLimitMs: 60_000,
        startedAt: new Date(),
      })
      .run();
    db.insert(runs)
      .values({
        id: "r_was_queued",
        commitId,
        networkId,
        workspaceId: "ws_lm64",
        createdBy: "u_designer1",
        pointsTotal: 9,
        timeLimitMs: 60_000,
      })
      .run();
    runsLib.resetSupervisorForTests();
    process.env.NEXT_RUNTIME = "nodejs";
    try {
      const { register } = await import("@/instrumentation");
      await register();
    } finally {
      delete process.env.NEXT_RUNTIME;
    }
    const interrupted = db.select().from(runs).where(eq(runs.id, "r_was_running")).get()!;
    expect(interrupted).toMatchObject({
      state: "interrupted",
      pointsDone: 4,
      reason: "the server stopped while this run was running; start it again",
    });
    expect(interrupted.finishedAt).toBeInstanceOf(Date);
    expect((await until("r_was_queued", ended)).state).toBe("done");
  });
});
