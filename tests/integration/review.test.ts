import { afterEach, describe, expect, it } from "vitest";
import { seedDemo } from "@/scripts/seed/index";
import { commitDiffs } from "@/db/schema";
import { commitBadges, compareCommits, storeCommitDiff } from "@/app/lib/review/diffs";
import { addComment, createThread, getThread, type Notify } from "@/app/lib/review/threads";
import { overlay, saveMeasurement } from "@/app/lib/review/measurement-store";
import { RequestError } from "@/app/lib/http";
import { freshDatabase } from "../helpers/db";
import { dividerHistory } from "../helpers/review-fixtures";

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));
function fresh() {
  const t = freshDatabase();
  cleanups.push(t.dispose);
  seedDemo(t.db);
  return t.db;
}
function recorder(): { notify: Notify; sent: { to: string; subject: string; text: string }[] } {
  const sent: { to: string; subject: string; text: string }[] = [];
  return { sent, notify: async (m) => void sent.push(m) };
}

describe("stored commit diffs", () => {
  it("a run of a commit that widened m2 moves exactly x, m1, m2 and the ratio, stored once", () => {
    const db = fresh();
    const { first, second, run1, run2 } = dividerHistory(db);
    const d1 = storeCommitDiff(run1, db)!;
    expect(d1.compared).toBe(0);
    expect(d1.summary.note).toMatch(/first commit/);
    const d2 = storeCommitDiff(run2, db)!;
    expect(d2.baseRunId).toBe(run1);
    expect(d2.baseCommitId).toBe(first.id);
    expect(d2.analysis).toBe("sweep iin");
    expect(d2.beyond).toBe(12); // 4 values × 3 points
    expect(d2.compared).toBe(3 * (5 + 3 + 3 + 1));
    expect([...new Set(d2.summary.rows.map((r) => r.name))].sort()).toEqual(["m1", "m2", "ratio", "x"]);
    // computed once: a second call returns the stored row, nothing new is written
    expect(storeCommitDiff(run2, db)!.createdAt).toEqual(d2.createdAt);
    expect(
      db
        .select()
        .from(commitDiffs)
        .all()
        .filter((r) => r.runId === run1 || r.runId === run2),
    ).toHaveLength(2);
    const badge = commitBadges([second.id], db).get(second.id)!;
    expect(badge.diffs[0]).toMatchObject({ analysis: "sweep iin", beyond: 12 });
    expect(badge.review).toBe("open");
  });

  it("compares two commits: text diff of the one changed line and the results rows", () => {
    const db = fresh();
    const { first, second } = dividerHistory(db);
    const c = compareCommits(first.id, second.id, {}, db);
    expect(c.text.added).toBe(1);
    expect(c.text.removed).toBe(1);
    expect(c.text.sideBySide.find((r) => r.kind === "changed")?.right?.text).toContain("w=2u");
    expect(c.results.beyond).toBe(12);
    expect(c.runs).toHaveLength(1);
    // a wide relative tolerance (0.4 of the larger value) hides m1 (1/3) and m2 (1/4) but not the ratio (1/2)
    const loose = compareCommits(first.id, second.id, { tolerance: { rel: 0.4, absVoltage: 1 } }, db);
    expect([...new Set(loose.results.rows.map((r) => r.name))]).toEqual(["ratio"]);
    expect(() => compareCommits(first.id, "nope", {}, db)).toThrow(RequestError);
  });
});

describe("threads", () => {
  it("a mention sends exactly one mail to the right member; non-members and the author get none", async () => {
    const db = fresh();
    const { second, run2 } = dividerHistory(db);
    const { notify, sent } = recorder();
    const { thread, notified } = await createThread(
      {
        commitId: second.id,
        runId: run2,
        title: "m2 width",
        body: "@reviewer please look at [[run " + run2 + "]]; cc @reviewer again, @nobody and me @designer",
        authorId: "u_designer1",
      },
      notify,
      db,
    );
    expect(notified).toEqual(["reviewer"]);
    expect(sent).toHaveLength(1);
    expect(sent[0].to).toBe("reviewer@larkspur.example");
    expect(sent[0].subject).toContain("m2 width");
    expect(sent[0].text).toContain(`/threads/${thread.id}`);
    const view = getThread(thread.id, db)!;
    expect(view.comments[0].html).toContain(`data-run="${run2}"`);
    expect(view.runCards).toEqual([expect.objectContaining({ id: run2, found: true, state: "done" })]);
    expect(view.runCards[0].probes![0].name).toBe("ratio");
  });

  it("verdicts: changes asked, then a fix, then signed off; the history shows the state", async () => {
    const db = fresh();
    const { first, second, run2 } = dividerHistory(db);
    const { notify } = recorder();
    const { thread } = await createThread(
      { commitId: first.id, title: "ratio", body: "Is 1:1 intended?", authorId: "u_reviewer" },
      notify,
      db,
    );
    await addComment(
      { threadId: thread.id, body: "Make m2 twice as wide.", authorId: "u_reviewer", verdict: "rework" },
      notify,
      db,
    );
    expect(commitBadges([first.id], db).get(first.id)!.review).toBe("rework");
    const t2 = await createThread(
      { commitId: second.id, runId: run2, title: "fix", body: `Fixed, see [[run ${run2}]]`, authorId: "u_designer1" },
      notify,
      db,
    );
    await addComment({ threadId: t2.thread.id, body: "", authorId: "u_reviewer", verdict: "signed_off" }, notify, db);
    const b = commitBadges([first.id, second.id], db);
    expect(b.get(second.id)!.review).toBe("signed_off");
    expect(b.get(second.id)!.verdicts[0]).toMatchObject({ reviewerName: "Ruth Calder", verdict: "signed_off" });
    expect(getThread(t2.thread.id, db)!.review).toBe("signed_off");
    // a verdict in the first thread about the fix commit; a commit of another network is refused
    await addComment(
      {
        threadId: thread.id,
        body: "The fix is good.",
        authorId: "u_owner",
        verdict: "signed_off",
        verdictCommitId: second.id,
      },
      notify,
      db,
    );
    const view = getThread(thread.id, db)!;
    expect(view.commitStates.map((c) => [c.commitId, c.review])).toEqual([
      [first.id, "rework"],
      [second.id, "signed_off"],
    ]);
    await expect(
      addComment(
        { threadId: thread.id, body: "x", authorId: "u_owner", verdict: "signed_off", verdictCommitId: "elsewhere" },
        notify,
        db,
      ),
    ).rejects.toThrow(/not a commit of this thread's network/);
  });

  it("refuses an empty comment, an over-long one, a run of another commit, and hides runs of other workspaces", async () => {
    const db = fresh();
    const { first, run2 } = dividerHistory(db);
    const { notify } = recorder();
    await expect(
      createThread({ commitId: first.id, title: "x", body: "  ", authorId: "u_reviewer" }, notify, db),
    ).rejects.toThrow(/write a comment/);
    await expect(
      createThread({ commitId: first.id, title: "x", body: "a".repeat(20_001), authorId: "u_reviewer" }, notify, db),
    ).rejects.toThrow(/at most 20000/);
    await expect(
      createThread({ commitId: first.id, runId: run2, title: "x", body: "b", authorId: "u_reviewer" }, notify, db),
    ).rejects.toThrow(/not a run of this commit/);
    const { thread } = await createThread(
      { commitId: first.id, title: "x", body: "[[run r_elsewhere]]", authorId: "u_reviewer" },
      notify,
      db,
    );
    // a reference that does not resolve in the workspace gets no card and stays plain text
    const view = getThread(thread.id, db)!;
    expect(view.runCards).toEqual([]);
    expect(view.comments[0].html).toContain("[[run r_elsewhere]]");
    expect(view.comments[0].html).not.toContain("run-ref");
  });
});

describe("measurements", () => {
  const CSV = "# invented bench data\niin [nA], ratio [1]\n1, 0.52\n10, 0.49\n100, 0.5\n";

  it("stores a good CSV and compares it with a run that sweeps its x", () => {
    const db = fresh();
    const { network, run2 } = dividerHistory(db);
    const m = saveMeasurement(
      { networkId: network.id, name: "bench.csv", bytes: new TextEncoder().encode(CSV), createdBy: "u_designer1" },
      db,
    );
    expect(m.x).toMatchObject({ name: "iin", unit: "nA" });
    expect(m.x.values).toEqual([1e-9, 1e-8, 1e-7]);
    const o = overlay(m.id, run2, {}, db);
    expect(o.series[0].against).toBe("ratio");
    expect(o.series[0].agreement.n).toBe(3);
    // simulated ratio is 0.5 at every point [derived: W1/W2 = 1/2]
    const expected = Math.sqrt((Math.log(0.52 / 0.5) ** 2 + Math.log(0.49 / 0.5) ** 2 + 0) / 3);
    expect(o.series[0].agreement.rmsLogRatio).toBeCloseTo(expected, 9);
    expect(o.series[0].agreement.maxAbsError).toBeCloseTo(0.02, 9);
  });

  it("refuses a bad CSV with row and column, and stores nothing", () => {
    const db = fresh();
    const { network } = dividerHistory(db);
    let err: RequestError | null = null;
    try {
      saveMeasurement(
        {
          networkId: network.id,
          name: "bad.csv",
          bytes: new TextEncoder().encode("iin [nA], ratio [1]\n1, 0.5\n2, half\n"),
          createdBy: "u_designer1",
        },
        db,
      );
    } catch (e) {
      err = e as RequestError;
    }
    expect(err?.status).toBe(422);
    expect(err?.message).toBe(
      'row 3, column 2 (ratio): "half" is not a number; write plain decimals such as 1.5e-9 (the unit belongs in the header)',
    );
    expect(db.$client.prepare("select count(*) as n from measurements where network_id = ?").get(network.id)).toEqual({
      n: 0,
    });
  });
});

describe("demo review seed", () => {
  it("tells the story once: changes asked, the fix with its run linked, the sign-off; bench data overlays the fix run", async () => {
    const db = fresh(); // seedDemo ran once
    const { seedDemo: again } = await import("@/scripts/seed/index");
    again(db); // and a second time changes nothing
    const { DEMO_THREAD_ID } = await import("@/scripts/seed/review");
    const view = getThread(DEMO_THREAD_ID, db)!;
    expect(view.comments.map((c) => [c.authorName, c.verdict])).toEqual([
      ["Ruth Calder", "rework"],
      ["Teo Brandt", null],
      ["Ruth Calder", "signed_off"],
    ]);
    expect(view.commitStates.map((c) => c.review)).toEqual(["rework", "signed_off"]);
    const fixCard = view.runCards.find((c) => c.commitId === view.commitStates[1].commitId)!;
    expect(fixCard).toMatchObject({ found: true, state: "done" });
    const badge = commitBadges([view.commitStates[1].commitId], db).get(view.commitStates[1].commitId)!;
    expect(badge.diffs[0].beyond).toBeGreaterThan(0);
    const ms = db.$client.prepare("select id, commit_id as commitId from measurements").all() as {
      id: string;
      commitId: string;
    }[];
    expect(ms).toHaveLength(1);
    const rowRun = db.$client
      .prepare("select id from runs where commit_id = ? and state = 'done'")
      .get(ms[0].commitId) as { id: string };
    const o = overlay(ms[0].id, rowRun.id, {}, db);
    expect(o.series[0].against).toBe("i{k}");
    expect(o.series[0].agreement.n).toBe(22);
    expect(o.series[0].agreement.rmsLogRatio).toBeGreaterThan(0.01);
    expect(o.series[0].agreement.rmsLogRatio).toBeLessThan(0.2);
  });
});

describe("comment preview", () => {
  it("cards for runs of the workspace, a warning for anything that will stay plain text, who is notified", async () => {
    const db = fresh();
    const { run2 } = dividerHistory(db);
    const { previewComment } = await import("@/app/lib/review/threads");
    const p = previewComment(
      "ws_lm64",
      `see ${run2} and [[r_elsewhere]]; @reviewer and @designer, and @noone`,
      "u_designer1",
      db,
    );
    expect(p.cards.map((c) => c.id)).toEqual([run2]);
    expect(p.warnings).toEqual([
      "run r_elsewhere is not a run of this workspace: it will be posted as plain text, not as a card",
      "@noone is not a member of this workspace: it will be posted as plain text and notify nobody",
    ]);
    // the author (designer@…, u_designer1) is not notified of their own mention
    expect(p.mentions).toEqual([{ handle: "reviewer", name: "Ruth Calder" }]);
    expect(p.html).toContain(`data-run="${run2}"`);
  });
});
