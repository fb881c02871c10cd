/**
 * The review part of the demo (invented, like all demo data): on the bias
 * divider, the reviewer asks for a change in a thread, the designer commits
 * the fix, runs it and links the new run in the thread, and the reviewer signs
 * the fix off. Plus a bench measurement of the LM-64 edge row (INVENTED
 * numbers, see scripts/seed/demo-data/lm64-row-bench.csv) attached to its head commit. Idempotent: keyed by fixed ids; a second
 * run changes nothing.
 */
import fs from "node:fs";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { commitText, getCommit, networkBySlug, slugify } from "@/app/lib/networks";
import { saveMeasurement } from "@/app/lib/review/measurement-store";
import { doneRunOf } from "@/app/lib/runs";
import type { DB } from "@/db";
import { newId } from "@/db/ids";
import { comments, measurements, reviews, threads } from "@/db/schema";
import { solveNow } from "./work";

export const DEMO_THREAD_ID = "t_demo_divider_ratio";
const BENCH_FILE = "lm64-row-bench.csv";

/** Seeds the demo review; returns whether it added the thread. */
export function seedReview(db: DB, workspaceId = "ws_lm64"): { thread: boolean; measurement: boolean } {
  const network = networkBySlug(workspaceId, slugify("Bias divider"), db);
  const row = networkBySlug(workspaceId, slugify("LM-64 edge row"), db);
  if (!network?.headCommitId) return { thread: false, measurement: false };
  let addedThread = false;

  const existing = db.select().from(threads).where(eq(threads.id, DEMO_THREAD_ID)).get();
  if (!existing) {
    const asked = getCommit(network.headCommitId, db)!;
    const askedRun = doneRunOf(asked.id, db);
    if (!askedRun || !/param dv = /.test(asked.text)) return { thread: false, measurement: false };
    const at = (minutesAgo: number) => new Date(Date.now() - minutesAgo * 60_000);

    // 1. The reviewer asks for a change on the head commit, pinned to its run.
    db.insert(threads)
      .values({
        id: DEMO_THREAD_ID,
        workspaceId,
        networkId: network.id,
        commitId: asked.id,
        runId: askedRun,
        title: "Split ratio at dv = 20 mV is short of 2:1",
        createdBy: "u_reviewer",
        createdAt: at(180),
        updatedAt: at(30),
      })
      .run();
    const ask = newId("c");
    db.insert(comments)
      .values({
        id: ask,
        threadId: DEMO_THREAD_ID,
        workspaceId,
        authorId: "u_reviewer",
        createdAt: at(180),
        body: `The mirror bank after this divider expects a **2:1** split, but the ratio on [[run ${askedRun}]] is about 1.72.\n\nIn weak inversion the ratio is exp(κ·dv/U_T), so dv ≈ U_T·ln 2/κ ≈ 25.6 mV. Please raise \`dv\` to **26 mV** and link the new run. Keep vcm and the tail current as they are.`,
      })
      .run();
    db.insert(reviews)
      .values({
        id: newId("rv"),
        commitId: asked.id,
        workspaceId,
        reviewerId: "u_reviewer",
        verdict: "changes_asked",
        threadId: DEMO_THREAD_ID,
        commentId: ask,
        createdAt: at(180),
      })
      .run();

    // 2. The designer commits the fix and runs it (the run stores its diff against the parent's run).
    const text = asked.text.replace(/param dv = [^\n#]+/, "param dv = 26mV           ");
    const fix = commitText(
      {
        networkId: network.id,
        parentId: asked.id,
        text,
        message: "Gate difference 26 mV for a 2:1 split, as asked in review",
        authorId: "u_designer1",
      },
      db,
    );
    const fixRun = solveNow({ commitId: fix.id, networkId: network.id, createdBy: "u_designer1", text }, db);
    db.insert(comments)
      .values({
        id: newId("c"),
        threadId: DEMO_THREAD_ID,
        workspaceId,
        authorId: "u_designer1",
        createdAt: at(60),
        body: `Done in commit \`${fix.id.slice(0, 10)}\`: \`param dv = 26mV\`, nothing else changed. The new run:\n\n${fixRun ? `[[run ${fixRun}]]` : "(the run could not be made)"}\n\nThe compare page lists every value that moved against the old run.`,
      })
      .run();

    // 3. The reviewer signs the fix off.
    const ok = newId("c");
    db.insert(comments)
      .values({
        id: ok,
        threadId: DEMO_THREAD_ID,
        workspaceId,
        authorId: "u_reviewer",
        createdAt: at(30),
        body: "Ratio is 2.0 now, tail voltage as before within a few mV. Signed off.",
      })
      .run();
    db.insert(reviews)
      .values({
        id: newId("rv"),
        commitId: fix.id,
        workspaceId,
        reviewerId: "u_reviewer",
        verdict: "signed_off",
        threadId: DEMO_THREAD_ID,
        commentId: ok,
        createdAt: at(30),
      })
      .run();
    addedThread = true;
  }

  // 4. Bench data of the signed-off revision (invented numbers).
  let addedMeasurement = false;
  const file = path.resolve(/*turbopackIgnore: true*/ "scripts", "seed", "demo-data", BENCH_FILE);
  const have = row
    ? db
        .select({ id: measurements.id })
        .from(measurements)
        .where(and(eq(measurements.networkId, row.id), eq(measurements.name, BENCH_FILE)))
        .get()
    : null;
  if (row && !have && fs.existsSync(file)) {
    saveMeasurement(
      {
        networkId: row.id,
        name: BENCH_FILE,
        note: "INVENTED demo bench data (chip 3, 300 K), not a real measurement",
        commitId: row.headCommitId,
        bytes: fs.readFileSync(file),
        createdBy: "u_designer2",
      },
      db,
    );
    addedMeasurement = true;
  }
  return { thread: addedThread, measurement: addedMeasurement };
}
