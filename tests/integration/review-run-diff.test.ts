/**
 * The stored commit diff end to end with the real solver: two commits whose
 * networks differ by the width of one device, each run by `executeRun` (the
 * run worker's code, in-process). Expected from the weak-inversion current
 * divider (E. Vittoz, "Analog VLSI signal processing: why, where and how?",
 * J. VLSI Signal Processing 8, 1994 [confirmed]; docs/physics.md §3 Pseudo-voltages): with equal
 * gates, doubling W of m2 moves the shared source node and the currents of m1
 * and m2 and their ratio (1 → 1/2) [derived]; the independent branch (node y,
 * device m3), the rails and their currents stay put.
 */
import { afterEach, describe, expect, it } from "vitest";
import { closeDb } from "@/db";
import { seedDemo } from "@/scripts/seed/index";
import { commitDiffs, runs } from "@/db/schema";
import { commitText, createNetwork } from "@/app/lib/networks";
import { executeRun } from "@/app/lib/run-exec";
import { compareCommits } from "@/app/lib/review/diffs";
import { freshDatabase } from "../helpers/db";
import { eq } from "drizzle-orm";

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));

const text = (w2: string) => `network split
rail vdd = 1.8
rail gnd = 0
rail g = 0.6
param iin = 10n
nfet m1 gate=g source=tail drain=vdd
nfet m2 gate=g source=tail drain=vdd w=${w2}
nfet m3 gate=g source=y drain=vdd
inject pull from=tail to=gnd value=iin
inject ref from=y to=gnd value=5n
probe ratio = current(m1) / current(m2)
sweep iin values [1n, 10n, 100n]
`;

describe("stored commit diff after a real run", () => {
  it("moves exactly the shared node, m1, m2 and the ratio", () => {
    const t = freshDatabase();
    process.env.RUNNEL_DB = t.file;
    cleanups.push(() => {
      closeDb();
      delete process.env.RUNNEL_DB;
      t.dispose();
    });
    const db = t.db;
    seedDemo(db);
    const { network, commit } = createNetwork(
      { workspaceId: "ws_lm64", name: "Split", text: text("1u"), message: "equal", authorId: "u_designer1" },
      db,
    );
    const second = commitText(
      {
        networkId: network.id,
        parentId: commit!.id,
        text: text("2u"),
        message: "m2 twice as wide",
        authorId: "u_designer1",
      },
      db,
    );
    for (const [id, c] of [
      ["r_one", commit!.id],
      ["r_two", second.id],
    ] as const) {
      db.insert(runs)
        .values({
          id,
          commitId: c,
          networkId: network.id,
          workspaceId: "ws_lm64",
          createdBy: "u_designer1",
          pointsTotal: 3,
          timeLimitMs: 60_000,
        })
        .run();
      expect(executeRun(id, {}, db).state).toBe("done");
    }
    const first = db.select().from(commitDiffs).where(eq(commitDiffs.runId, "r_one")).get()!;
    expect(first.compared).toBe(0);
    const d = db.select().from(commitDiffs).where(eq(commitDiffs.runId, "r_two")).get()!;
    expect(d.baseRunId).toBe("r_one");
    expect(d.analysis).toBe("sweep iin");
    const moved = [...new Set(d.summary.rows.map((r) => `${r.kind}:${r.name}`))].sort();
    expect(moved).toEqual(["device:m1", "device:m2", "node:tail", "probe:ratio"]);
    expect(d.beyond).toBe(4 * 3);
    const ratio = d.summary.rows.find((r) => r.name === "ratio")!;
    expect(ratio.from).toBeCloseTo(1, 9);
    expect(ratio.to).toBeCloseTo(0.5, 9);
    // the on-demand comparison agrees with the stored one
    expect(compareCommits(commit!.id, second.id, {}, db).results.beyond).toBe(12);
  });
});
