/**
 * The fair run queue through the route handlers, on a one-thread local pool:
 * a small run from another workspace starts before one workspace's queue
 * drains; the per-user cap on queued runs answers 429 with the numbers; a
 * rail far out of range ends the run with a clear failure naming the rail
 * (never a database constraint error).
 *
 * Physics note: the exponential device law holds exp(κ·V/U_T)-type terms
 * (Vittoz & Arreguit 1993; docs/physics.md §3 Pseudo-voltages), and double precision overflows
 * past exp(709) (IEEE 754 binary64, common practice): about 18 V at U_T =
 * 25.9 mV, which is why 100 kV on a rail has no finite operating point.
 */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import type { DB } from "@/db";
import { memberships, runs, workspaces } from "@/db/schema";
import { buildAccountsFixture, type AccountsFixture, type Who } from "../helpers/accounts";
import { apiCaller } from "../helpers/api";
import { pairSweep } from "../helpers/pair-sweep";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

const SWEEP = pairSweep(40);

const MIRROR = `network mirror
set i0 = 0.5p
rail vdd = 100000
rail gnd = 0
rail vout = 1.0
rail gp = 1.4
pfet ref gate=gp source=vdd drain=x well=vdd w=1u l=4u
nfet diode gate=x source=gnd drain=x w=1u l=1u
nfet copy gate=x source=gnd drain=vout w=2u l=1u
probe gain = current(copy) / current(diode)
`;

let fixture: AccountsFixture;
let db: DB;
let call: ReturnType<typeof apiCaller>;
let supervisor: typeof import("@/app/lib/run-supervisor");

type RunJson = { id: string; state: string; reason: string | null; pointsDone: number; pointsTotal: number };

beforeAll(async () => {
  process.env.RUNNEL_TEST_FAULTS = "1";
  // One thread, so that runs really wait for each other.
  process.env.RUNNEL_RUN_THREADS = "1";
  fixture = buildAccountsFixture();
  db = fixture.useCopy();
  call = apiCaller(fixture);
  supervisor = await import("@/app/lib/run-supervisor");
  // A second workspace, owned by the user who is an outsider to the demo's.
  db.insert(workspaces).values({ id: "ws_other", slug: "other-bench", name: "Other bench", description: "" }).run();
  db.insert(memberships)
    .values({ workspaceId: "ws_other", userId: fixture.actors.outsider!.userId, role: "owner" })
    .run();
});

afterAll(async () => {
  await supervisor.whenIdle();
  await supervisor.closePool();
  fixture.dispose();
  delete process.env.RUNNEL_TEST_FAULTS;
  delete process.env.RUNNEL_RUN_THREADS;
  delete process.env.RUNNEL_QUEUED_RUNS_PER_USER;
});

async function newNetwork(who: Who, slug: string, name: string, text: string): Promise<string> {
  const r = await call(
    who,
    "w/[slug]/networks/route",
    "POST",
    `/api/w/${slug}/networks`,
    { slug },
    { name, text, message: "test" },
  );
  expect(r.status).toBe(201);
  return (r.json as { commit: { id: string } }).commit.id;
}

const startRun = (who: Who, body: Record<string, unknown>) => call(who, "runs/route", "POST", "/api/runs", {}, body);

async function runOf(id: string): Promise<RunJson> {
  return (db.select().from(runs).where(eq(runs.id, id)).get() as unknown as RunJson) ?? null;
}

async function until(id: string, done: (r: RunJson) => boolean, ms = 30_000): Promise<RunJson> {
  const end = Date.now() + ms;
  for (;;) {
    const r = await runOf(id);
    if (done(r)) return r;
    if (Date.now() > end) throw new Error(`run ${id} still ${r.state} after ${ms} ms`);
    await new Promise((f) => setTimeout(f, 50));
  }
}
const ended = (r: RunJson) => !["queued", "running"].includes(r.state);

describe("the fair run queue", () => {
  it("starts a small run from another workspace before one workspace's long queue drains", async () => {
    const long = await newNetwork("designer", "lm64-edge-row", "Long queue", SWEEP);
    const small = await newNetwork("outsider", "other-bench", "Small", SWEEP.replace("points 40", "points 1"));
    // Four runs of about 1 s each (40 points × 25 ms) from one designer...
    const queue: string[] = [];
    for (let k = 0; k < 4; k++) {
      const r = await startRun("designer", { commit: long, fault: "slow" });
      expect(r.status).toBe(201);
      queue.push((r.json as { run: RunJson }).run.id);
    }
    // ...then one point from the other workspace: it waits for at most the chunk being solved.
    const r = await startRun("outsider", { commit: small });
    expect(r.status).toBe(201);
    const done = await until((r.json as { run: RunJson }).run.id, ended);
    expect(done.state).toBe("done");
    const states = await Promise.all(queue.map(async (id) => (await runOf(id)).state));
    // A first-in-first-out queue would have finished all four first.
    expect(states.filter((s) => s === "queued").length).toBeGreaterThanOrEqual(2);
    for (const id of queue) expect((await until(id, ended)).state).toBe("done");
  });

  it("refuses a run past the per-user cap on queued runs with 429, the limit and the count", async () => {
    process.env.RUNNEL_QUEUED_RUNS_PER_USER = "2";
    const commit = await newNetwork("designer", "lm64-edge-row", "Capped", SWEEP);
    const accepted: string[] = [];
    let refused: Awaited<ReturnType<typeof startRun>> | null = null;
    for (let k = 0; k < 5 && !refused; k++) {
      const r = await startRun("designer", { commit, fault: "slow" });
      if (r.status === 201) accepted.push((r.json as { run: RunJson }).run.id);
      else refused = r;
    }
    expect(refused?.status).toBe(429);
    expect(refused?.json).toMatchObject({ limit: 2, queued: 2 });
    expect(refused?.json.error).toBe(
      "you have 2 runs queued; the limit is 2 queued runs per user. Wait for one to start, or cancel one.",
    );
    // Another user is not held by the designer's queue.
    const other = await startRun("owner", { commit });
    expect(other.status).toBe(201);
    delete process.env.RUNNEL_QUEUED_RUNS_PER_USER;
    for (const id of [...accepted, (other.json as { run: RunJson }).run.id]) await until(id, ended);
  });
});

describe("bad numbers", () => {
  it("a rail at 100 kV fails the run with a message naming the rail, and stores its points", async () => {
    const commit = await newNetwork("designer", "lm64-edge-row", "Far rail", MIRROR);
    const r = await startRun("designer", { commit });
    expect(r.status).toBe(201);
    const run = await until((r.json as { run: RunJson }).run.id, ended);
    expect(run.state).toBe("failed");
    expect(run.reason).toMatch(/^no point could be solved: rail vdd = 100000 V is 99998\.6 V from rail gp = 1\.4 V: /);
    expect(run.reason).not.toMatch(/constraint|NOT NULL/i);
    const row = db.select().from(runs).where(eq(runs.id, run.id)).get()!;
    expect(row.pointsDone).toBe(1);
    expect(row.failures).toEqual([{ point: 0, message: expect.stringMatching(/^rail vdd = 100000 V/) }]);
  });

  it("every example with its ground at 3.2 kV or its supply at 100 kV ends with a clear state, never a database error", async () => {
    const fs = await import("node:fs");
    process.env.RUNNEL_QUEUED_RUNS_PER_USER = "100";
    // Every network first: a commit made while runs write can still meet SQLITE_BUSY (issue of the commit path).
    const commits: { name: string; commit: string }[] = [];
    for (const file of fs.readdirSync("examples").filter((f) => f.endsWith(".runnel"))) {
      const text = fs.readFileSync(`examples/${file}`, "utf8");
      for (const [what, changed] of [
        ["gnd", text.replace(/rail gnd = 0\b/, "rail gnd = 3200")],
        ["vdd", text.replace(/rail vdd = [0-9.]+/, "rail vdd = 100000")],
      ]) {
        const name = `${file} ${what}`;
        commits.push({ name, commit: await newNetwork("owner", "lm64-edge-row", name, changed) });
      }
    }
    const ids: { name: string; id: string }[] = [];
    for (const { name, commit } of commits) {
      const r = await startRun("owner", { commit });
      expect(r.status, `${name}: ${r.text}`).toBe(201);
      ids.push({ name, id: (r.json as { run: RunJson }).run.id });
    }
    for (const { name, id } of ids) {
      const run = await until(id, ended, 60_000);
      const seen = `${name}: ${run.state} (${run.pointsDone}/${run.pointsTotal}) ${run.reason}`;
      expect(["done", "failed"], seen).toContain(run.state);
      expect(run.reason ?? "", seen).not.toMatch(/constraint|NOT NULL|SQLITE/i);
      expect(run.pointsDone, seen).toBe(run.pointsTotal);
    }
  });
});
