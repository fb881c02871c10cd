/**
 * A sign-off of a commit whose newest run fails an expectation needs a written reason, enforced by the comments
 * route (POST /api/threads/[id]/comments): without one (or with a few characters) it answers 422 naming the failing
 * expectations and records nothing; with one it is recorded, and the thread shows it was given over the failure.
 * The confirmation's summary lists each expectation's status from the run's stored summaries.
 *
 * The pair: I1/I2 = exp(κ·Δv/U_T) in weak inversion (C. Mead, "Analog VLSI and Neural Systems", 1989); with
 * κ ≈ 0.7 and U_T ≈ 25.9 mV a ±40 mV split gives ratios of about 0.34 and 2.9, outside 0.9…1.1 at both ends.
 */
import { eq } from "drizzle-orm";
import { describe, expect, it, vi } from "vitest";
import type { DB } from "@/db";
import { comments, reviews, runs, threads } from "@/db/schema";
import { getThread } from "@/app/lib/review/threads";
import { signOffSummaries } from "@/app/lib/review/sign-off";
import { commitAndRun } from "../helpers/runs";
import { accountsCopy, WORKSPACE, type AccountsFixture } from "../helpers/accounts";
import { SITE } from "../helpers/request-context";
import { pairSweep } from "../helpers/pair-sweep";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);

let fixture: AccountsFixture;
let db: DB;
accountsCopy((f, d) => ((fixture = f), (db = d)));

const EXPECT = "expect ratio_band = 0.9 <= ratio <= 1.1\nexpect pair_saturated = saturated devices=m*\n";

function committedRun(name: string, text: string): { commitId: string; threadId: string } {
  const { networkId, commitId, runId: id } = commitAndRun(db, name, text, 9);
  const threadId = `t_${name.replace(/\W/g, "").toLowerCase()}`;
  db.insert(threads)
    .values({
      id: threadId,
      workspaceId: WORKSPACE.id,
      networkId,
      commitId,
      runId: id,
      title: name,
      createdBy: "u_designer1",
    })
    .run();
  return { commitId, threadId };
}

function post(threadId: string, body: unknown): Promise<Response> {
  const headers = new Headers({
    origin: SITE,
    host: new URL(SITE).host,
    cookie: fixture.actors.reviewer!.cookie,
    "content-type": "application/json",
  });
  return import("@/app/api/threads/[id]/comments/route").then(({ POST }) =>
    POST(
      new Request(`${SITE}/api/threads/${threadId}/comments`, { method: "POST", headers, body: JSON.stringify(body) }),
      {
        params: Promise.resolve({ id: threadId }),
      },
    ),
  );
}

describe("signing off over a failing expectation", () => {
  it("is refused without a written reason and recorded with one; the thread shows it", async () => {
    const { commitId, threadId } = committedRun("Pair band", pairSweep(9) + EXPECT);
    const run = db.select().from(runs).where(eq(runs.commitId, commitId)).get()!;
    expect(run.expectationsFailing).toBe(1);

    const summary = signOffSummaries([commitId], db)[commitId];
    expect(summary.reasonRequired).toBe(true);
    expect(summary.failing).toEqual(["ratio_band"]);
    expect(summary.expectations).toBe("1 of 2 failing: ratio_band");
    expect(summary.runs[0].checks.map((c) => [c.name, c.status])).toEqual([
      ["ratio_band", "failed"],
      ["pair_saturated", "met"],
    ]);
    expect(summary.runs[0].checks[0].detail).toMatch(/^\d\/9 points pass, margin −/);

    for (const body of ["", "   ", "ok fine"]) {
      const r = await post(threadId, { body, verdict: "signed_off" });
      expect(r.status).toBe(422);
      expect(((await r.json()) as { error: string }).error).toMatch(
        /the newest run of this commit fails ratio_band; a sign-off needs a written reason/,
      );
    }
    expect(db.select().from(reviews).where(eq(reviews.commitId, commitId)).all()).toHaveLength(0);
    expect(db.select().from(comments).where(eq(comments.threadId, threadId)).all()).toHaveLength(0);

    // Sending back for rework needs no reason.
    expect((await post(threadId, { body: "", verdict: "rework" })).status).toBe(201);
    const reason = "The band is a bring-up target; the ends of the sweep are outside the input range.";
    expect((await post(threadId, { body: reason, verdict: "signed_off" })).status).toBe(201);
    const view = getThread(threadId, db)!;
    expect(view.review).toBe("signed_off");
    const signOff = view.comments.find((c) => c.verdict === "signed_off")!;
    expect(signOff.body).toBe(reason);
    expect(signOff.signedOffFailing).toEqual(["ratio_band"]);
    expect(view.comments.find((c) => c.verdict === "rework")!.signedOffFailing).toBeNull();
  });

  it("needs no reason when every expectation passes", async () => {
    const passing = EXPECT.replace("0.9 <= ratio <= 1.1", "0.2 <= ratio <= 5");
    const { commitId, threadId } = committedRun("Pair wide band", pairSweep(9) + passing);
    const summary = signOffSummaries([commitId], db)[commitId];
    expect(summary).toMatchObject({ reasonRequired: false, failing: [], expectations: "all 2 pass" });
    expect((await post(threadId, { body: "", verdict: "signed_off" })).status).toBe(201);
    expect(getThread(threadId, db)!.comments[0].signedOffFailing).toBeNull();
  });
});
