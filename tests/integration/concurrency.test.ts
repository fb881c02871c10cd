/**
 * The server under a team's ordinary concurrency, through the route handlers
 * with the real run pool writing results:
 * - two designers committing from the same parent: exactly one 201, one 409;
 * - 200 commits made while runs write their points: every one 201, never a 500;
 * - fuzz: 300 mutated example networks committed and run concurrently: no 500,
 *   no run left queued or running.
 * Mutations are drawn from a seeded generator (pure-rand), so a failure replays.
 */
import fs from "node:fs";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { uniformInt } from "pure-rand/distribution/uniformInt";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { buildAccountsFixture, WORKSPACE, type AccountsFixture, type Who } from "../helpers/accounts";
import { apiCaller } from "../helpers/api";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

let fixture: AccountsFixture;
let supervisor: typeof import("@/app/lib/run-supervisor");
beforeAll(async () => {
  fixture = buildAccountsFixture();
  fixture.useCopy();
  supervisor = await import("@/app/lib/run-supervisor");
});
afterAll(async () => {
  await supervisor.whenIdle();
  await supervisor.closePool();
  const { closeInteractivePool } = await import("@/app/lib/interactive");
  await closeInteractivePool();
  fixture.dispose();
});

const call = (who: Who, file: string, method: string, url: string, params?: Record<string, string>, body?: unknown) =>
  apiCaller(fixture)(who, file, method, url, params, body);

const ENDED = new Set(["done", "failed", "canceled", "interrupted"]);
const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function newNetwork(name: string, text: string): Promise<{ id: string; head: string }> {
  const r = await call(
    "designer",
    "w/[slug]/networks/route",
    "POST",
    `/api/w/${WORKSPACE.slug}/networks`,
    {
      slug: WORKSPACE.slug,
    },
    { name, text, message: "first" },
  );
  expect(r.status, r.text).toBe(201);
  const j = r.json as { network: { id: string }; commit: { id: string } };
  return { id: j.network.id, head: j.commit.id };
}

/** The run's final state, waiting for it to end (at most about a minute). */
async function untilEnded(id: string): Promise<string> {
  for (let t = 0; t < 2_400; t++) {
    const { state } = await runState(id);
    if (ENDED.has(state)) return state;
    await pause(25);
  }
  return (await runState(id)).state;
}

async function runState(id: string): Promise<{ state: string; pointsDone: number }> {
  const r = await call("viewer", "runs/[id]/route", "GET", `/api/runs/${id}`, { id });
  expect(r.status, r.text).toBe(200);
  return (r.json as { run: { state: string; pointsDone: number } }).run;
}

/** A sweep whose points the worker writes in many small transactions for a few seconds. */
const BUSY = fs
  .readFileSync("examples/grid32.runnel", "utf8")
  .replace(/\nsweep [^\n]*/g, "")
  .concat("\nsweep ibg from 100p to 300p points 400\n");

describe("concurrency", () => {
  it("two designers committing from the same parent get exactly one 201 and one 409", async () => {
    const n = await newNetwork("Same parent", "network a\nrail vdd = 1.8\nrail gnd = 0\n");
    const commit = (who: Who, text: string) =>
      call(
        who,
        "networks/[id]/commits/route",
        "POST",
        `/api/networks/${n.id}/commits`,
        { id: n.id },
        {
          parent: n.head,
          text,
          message: `from ${who}`,
        },
      );
    const answers = await Promise.all([
      commit("designer", "network a\nrail vdd = 1.7\nrail gnd = 0\n"),
      commit("owner", "network a\nrail vdd = 1.6\nrail gnd = 0\n"),
    ]);
    expect(answers.map((a) => a.status).sort()).toEqual([201, 409]);
  });

  it("200 commits made while runs write their points all succeed", { timeout: 240_000 }, async () => {
    const busy = await newNetwork("Busy grid", BUSY);
    const runIds: string[] = [];
    for (let i = 0; i < 2; i++) {
      const r = await call("designer", "runs/route", "POST", "/api/runs", {}, { commit: busy.head });
      expect(r.status, r.text).toBe(201);
      runIds.push((r.json as { run: { id: string } }).run.id);
    }
    while ((await runState(runIds[0])).pointsDone === 0) await pause(20);
    const chains = await Promise.all(
      [0, 1, 2, 3].map((c) => newNetwork(`Chain ${c}`, `network c${c}\nrail vdd = 1.8\n`)),
    );
    const statuses: number[] = [];
    const pointsSeen: number[] = [];
    await Promise.all(
      chains.map(async (chain, c) => {
        let head = chain.head;
        for (let k = 0; k < 50; k++) {
          const r = await call(
            "designer",
            "networks/[id]/commits/route",
            "POST",
            `/api/networks/${chain.id}/commits`,
            {
              id: chain.id,
            },
            { parent: head, text: `network c${c}\nrail vdd = ${1 + k / 100}\n`, message: `step ${k}` },
          );
          statuses.push(r.status);
          if (r.status === 201) head = (r.json as { commit: { id: string } }).commit.id;
          // both runs' stored points together (the second run often starts when the first one ends)
          if (k % 10 === 0)
            pointsSeen.push((await runState(runIds[0])).pointsDone + (await runState(runIds[1])).pointsDone);
        }
      }),
    );
    expect(statuses.filter((s) => s !== 201)).toEqual([]);
    expect(statuses).toHaveLength(200);
    // the runs were writing meanwhile, and finish
    expect(new Set(pointsSeen).size).toBeGreaterThan(1);
    for (const id of runIds) expect(await untilEnded(id)).toBe("done");
  });

  it(
    "fuzz: 300 mutated example networks committed and run concurrently: no 500, no run stuck",
    { timeout: 600_000 },
    async () => {
      const examples = fs
        .readdirSync("examples")
        .filter((f) => f.endsWith(".runnel"))
        .map((f) => fs.readFileSync(`examples/${f}`, "utf8"));
      const rng = xoroshiro128plus(13);
      const pick = (n: number) => uniformInt(rng, 0, n - 1);
      const NUMBERS = [
        "0",
        "-1",
        "3200",
        "100000",
        "1e300",
        "-1e-300",
        "1e-30",
        "nan",
        "1/0",
        "0.7e",
        "1_0",
        "9".repeat(400),
      ];
      const mutate = (text: string): string => {
        const lines = text.split("\n");
        for (let m = 1 + pick(3); m > 0; m--) {
          const i = pick(lines.length);
          switch (pick(7)) {
            case 0: // a number replaced by an extreme or broken one
              lines[i] = lines[i].replace(/-?\d+(\.\d+)?(e-?\d+)?[a-z]?/, NUMBERS[pick(NUMBERS.length)]);
              break;
            case 1: // a line dropped
              lines.splice(i, 1);
              break;
            case 2: // a line repeated
              lines.splice(i, 0, lines[i]);
              break;
            case 3: // a line cut short
              lines[i] = lines[i].slice(0, pick(lines[i].length + 1));
              break;
            case 4: // two lines swapped
              [lines[i], lines[(i + 1) % lines.length]] = [lines[(i + 1) % lines.length], lines[i]];
              break;
            case 5: // a rail moved far away
              lines.splice(i, 0, `rail vdd = ${["3200", "100000", "-50", "0"][pick(4)]}`);
              break;
            default: // a character flipped
              if (lines[i].length) {
                const at = pick(lines[i].length);
                lines[i] = lines[i].slice(0, at) + "{}=()#@\u0000é-"[pick(11)] + lines[i].slice(at + 1);
              }
          }
        }
        return lines.join("\n");
      };
      const statuses: Record<string, number> = {};
      const count = (what: string, status: number) =>
        (statuses[`${what} ${status}`] = (statuses[`${what} ${status}`] ?? 0) + 1);
      const runIds: string[] = [];
      let next = 0;
      const lane = async () => {
        for (let k = next++; k < 300; k = next++) {
          const text = mutate(examples[k % examples.length]);
          const created = await call(
            "designer",
            "w/[slug]/networks/route",
            "POST",
            `/api/w/${WORKSPACE.slug}/networks`,
            {
              slug: WORKSPACE.slug,
            },
            { name: `Fuzz ${k}`, text, message: "mutated" },
          );
          count("commit", created.status);
          if (created.status !== 201) continue;
          const commit = (created.json as { commit: { id: string; ok: boolean } }).commit;
          const started = await call(
            "designer",
            "runs/route",
            "POST",
            "/api/runs",
            {},
            {
              commit: commit.id,
              timeLimitSeconds: 20,
            },
          );
          count("run", started.status);
          if (started.status !== 201) continue;
          const id = (started.json as { run: { id: string } }).run.id;
          runIds.push(id);
          // one lane keeps at most one run in the queue
          for (let t = 0; t < 2_000 && !ENDED.has((await runState(id)).state); t++) await pause(25);
        }
      };
      await Promise.all(Array.from({ length: 6 }, lane));
      expect(Object.keys(statuses).filter((k) => Number(k.split(" ")[1]) >= 500 && !k.endsWith(" 503"))).toEqual([]);
      expect(statuses["commit 201"] + (statuses["commit 503"] ?? 0)).toBe(300);
      expect(statuses["commit 201"]).toBeGreaterThan(250);
      expect(statuses["run 201"]).toBeGreaterThan(30);
      await supervisor.whenIdle();
      const stuck: string[] = [];
      for (const id of runIds) if (!ENDED.has((await runState(id)).state)) stuck.push(id);
      expect(stuck).toEqual([]);
    },
  );
});
