/**
 * Expectations of a run on the server: each solved point's verdicts and margins stored with it
 * (run_point_expectations), the run's summaries made from the stored points once every chunk is in — the same
 * however the run is split, and the same as the command line's tally of the same network — and the devices an
 * expectation covers left out of the generic "not saturated" count. Runs execute in-process (executeRun).
 */
import fs from "node:fs";
import { asc, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import type { DB } from "@/db";
import { runPointExpectations, runs } from "@/db/schema";
import { readSeries, runLayout } from "@/app/lib/results";
import { elaborate } from "@/src/lang/index";
import { solveNetwork, summarizeExpectations } from "@/src/solver/index";
import { commitAndRun, type Chunk } from "../helpers/runs";
import { accountsCopy } from "../helpers/accounts";

let db: DB;

accountsCopy((_fixture, d) => (db = d));

function execute(text: string, name: string, chunks: Chunk[], total: number): string {
  return commitAndRun(db, name, text, total, chunks, 120_000).runId;
}

const run = (id: string) => db.select().from(runs).where(eq(runs.id, id)).get()!;
const verdictRows = (id: string) =>
  db
    .select()
    .from(runPointExpectations)
    .where(eq(runPointExpectations.runId, id))
    .orderBy(asc(runPointExpectations.point))
    .all()
    .map((r) => ({ ...r, runId: "" }));

describe("a run's expectations", () => {
  const mc = fs.readFileSync("examples/mismatch.runnel", "utf8");

  it("are stored per point and summarised the same for one chunk and for five", () => {
    const one = execute(mc, "MC expect one", [{ start: 0, end: 600 }], 600);
    const five = execute(
      mc,
      "MC expect five",
      [
        { start: 0, end: 1 },
        { start: 1, end: 200 },
        { start: 200, end: 201 },
        { start: 201, end: 400 },
        { start: 400, end: 600 },
      ],
      600,
    );
    expect(verdictRows(one)).toHaveLength(600);
    expect(verdictRows(five)).toEqual(verdictRows(one));
    expect(run(five).expectations).toEqual(run(one).expectations);
    const [matched, saturated] = run(one).expectations!;
    expect(matched).toMatchObject({ name: "matched", passed: false, points: 600, notSolved: 0 });
    expect(matched.gridYield!.samples).toEqual([200, 200, 200]);
    expect(matched.gridYield!.passed.reduce((a, b) => a + b, 0)).toBe(matched.pointsPassed);
    expect(saturated).toMatchObject({ name: "pair_saturated", passed: true, pointsPassed: 600 });
    expect(run(one).expectationsFailing).toBe(1);
  });

  it("match the command line's tally of the same network", () => {
    const id = execute(mc, "MC expect cli", [{ start: 0, end: 600 }], 600);
    const net = elaborate(mc).network!;
    const cli = summarizeExpectations(net, solveNetwork(net));
    const server = run(id).expectations!;
    // The server's first-failure params also hold temp (every stored point does); the rest is the same.
    const strip = (xs: typeof cli) =>
      xs.map((x) => ({ ...x, firstFailure: x.firstFailure && { ...x.firstFailure, params: {} } }));
    expect(strip(server)).toEqual(strip(cli));
    expect(server[0].firstFailure!.params).toMatchObject(cli[0].firstFailure!.params);
  });

  it("are read along the run as series: each point's verdict and margin", () => {
    const id = execute(mc, "MC expect series", [{ start: 0, end: 600 }], 600);
    const layout = runLayout(id, db)!;
    expect(layout.expectations!.map((x) => x.name)).toEqual(["matched", "pair_saturated"]);
    const s = readSeries(id, layout, 0, 600, db);
    expect(s.passed[0].filter((v) => v === 1)).toHaveLength(run(id).expectations![0].pointsPassed);
    expect(Math.min(...s.margins[0])).toBe(run(id).expectations![0].margin);
  });

  it("that cover devices by design replace the generic not-saturated count for those devices only", () => {
    const row = fs.readFileSync("examples/row64.runnel", "utf8");
    const plain = row.replace(/^expect .*$/gm, "");
    const covered = execute(row, "Row covered", [{ start: 0, end: 1 }], 1);
    const uncovered = execute(plain, "Row plain", [{ start: 0, end: 1 }], 1);
    // The 63 laterals are not saturated by design (a diffuser's laterals conduct both ways).
    expect(run(uncovered).devicesNotSaturated).toBe(63);
    expect(run(uncovered).expectations).toBeNull();
    expect(run(uncovered).expectationsFailing).toBeNull();
    expect(run(covered).devicesNotSaturated).toBe(0);
    expect(run(covered).expectationsFailing).toBe(0);
    // Only the outputs covered: the laterals are counted again.
    const outputsOnly = execute(
      row.replace(/^expect laterals_unsaturated.*$/m, ""),
      "Row outputs",
      [{ start: 0, end: 1 }],
      1,
    );
    expect(run(outputsOnly).devicesNotSaturated).toBe(63);
  });
});
