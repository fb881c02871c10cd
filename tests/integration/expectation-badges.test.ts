/**
 * A commit's expectations in one word (app/lib/review/expectation-status.ts), as history rows, the workspace list,
 * the compare page and thread run cards show them: all pass, n failing, no checks, or not run — read from the
 * summary stored when the commit's newest ended run ended, never recomputed (a stored figure changed by hand is
 * what is shown), and not hidden by a newer run still queued.
 *
 * The pair: I1/I2 = exp(κ·Δv/U_T) in weak inversion (C. Mead, "Analog VLSI and Neural Systems", 1989); ±40 mV
 * gives about 0.34 and 2.9, outside 0.9…1.1 at both ends and inside 0.2…5 everywhere.
 */
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import type { DB } from "@/db";
import { runs } from "@/db/schema";
import { commitBadge, compareCommits } from "@/app/lib/review/diffs";
import { commitText } from "@/app/lib/networks";
import { expectationBadges } from "@/app/lib/review/expectation-status";
import { runCards } from "@/app/lib/review/threads";
import { commitNetwork, executeStoredRun, storeRun } from "../helpers/runs";
import { accountsCopy, WORKSPACE } from "../helpers/accounts";
import { pairSweep } from "../helpers/pair-sweep";

let db: DB;
accountsCopy((_fixture, d) => (db = d));

const BAND = (low: number, high: number) =>
  `expect ratio_band = ${low} <= ratio <= ${high}\nexpect pair_saturated = saturated devices=m*\n`;

function commit(name: string, text: string, run = true): { commitId: string; runId: string | null } {
  const ids = commitNetwork(db, name, text);
  return { commitId: ids.commitId, runId: run ? executeStoredRun(db, ids, 9) : null };
}

describe("a commit's expectation status", () => {
  it("is all pass, n failing, no checks or not run, from the newest ended run", () => {
    const pass = commit("Badge pass", pairSweep(9) + BAND(0.2, 5));
    const fail = commit("Badge fail", pairSweep(9) + BAND(0.9, 1.1));
    const none = commit("Badge none", pairSweep(9));
    const notRun = commit("Badge not run", pairSweep(9) + BAND(0.2, 5), false);
    const b = expectationBadges([pass.commitId, fail.commitId, none.commitId, notRun.commitId], db);
    expect(b.get(pass.commitId)).toEqual({ status: "pass", failing: 0, count: 2, runId: pass.runId });
    expect(b.get(fail.commitId)).toEqual({ status: "fail", failing: 1, count: 2, runId: fail.runId });
    expect(b.get(none.commitId)).toEqual({ status: "none", failing: 0, count: 0, runId: none.runId });
    expect(b.get(notRun.commitId)).toEqual({ status: "not-run", failing: 0, count: 0, runId: null });
    // The history badge (GET /api/commits/[id]/review) carries it.
    expect(commitBadge(fail.commitId, db).expectations).toMatchObject({ status: "fail", failing: 1 });
  });

  it("is read from the stored summary, and a newer queued run does not hide it", () => {
    const c = commit("Badge stored", pairSweep(9) + BAND(0.2, 5));
    db.update(runs).set({ expectationsFailing: 2 }).where(eq(runs.id, c.runId!)).run();
    expect(expectationBadges([c.commitId], db).get(c.commitId)).toMatchObject({ status: "fail", failing: 2 });
    const networkId = db.select().from(runs).where(eq(runs.id, c.runId!)).get()!.networkId;
    storeRun(db, { commitId: c.commitId, networkId }, 9);
    expect(expectationBadges([c.commitId], db).get(c.commitId)).toMatchObject({ runId: c.runId, failing: 2 });
  });

  it("is on each thread run card", () => {
    const fail = commit("Card fail", pairSweep(9) + BAND(0.9, 1.1));
    const none = commit("Card none", pairSweep(9));
    const [a, b] = runCards([fail.runId!, none.runId!], WORKSPACE.id, db);
    expect(a.expectations).toMatchObject({ status: "fail", failing: 1, count: 2 });
    expect(b.expectations).toMatchObject({ status: "none" });
  });

  it("changes between two commits on the compare page, newly failing first", () => {
    const first = commit("Compare band", pairSweep(9) + BAND(0.2, 5));
    const networkId = db.select().from(runs).where(eq(runs.id, first.runId!)).get()!.networkId;
    const second = commitText(
      {
        networkId,
        parentId: first.commitId,
        text: pairSweep(9) + BAND(0.9, 1.1),
        message: "narrower band",
        authorId: "u_designer1",
      },
      db,
    );
    executeStoredRun(db, { commitId: second.id, networkId }, 9);
    const cmp = compareCommits(first.commitId, second.id, {}, db);
    expect(cmp.expectations.map((c) => [c.name, c.change, c.from?.passed, c.to?.passed])).toEqual([
      ["ratio_band", "newly failing", true, false],
      ["pair_saturated", "still passing", true, true],
    ]);
  });
});
