/**
 * The demo's failing commit (scripts/seed/review.ts, invented scenario): the LM-64 edge row with its lateral gate at
 * 760 mV fails its `edge_contrast` expectation and nothing else, its thread links the run, and the status badges
 * read it from the stored summary. The threshold itself is the demo's own target (examples/row64.runnel); the
 * figure was found with `runnel solve examples/row64.runnel` at vh = 0.76 (margin −0.0117).
 */
import { eq } from "drizzle-orm";
import { afterEach, describe, expect, it } from "vitest";
import { expectationBadges } from "@/app/lib/review/expectation-status";
import { runs, threads } from "@/db/schema";
import { seedDemo } from "@/scripts/seed/index";
import { DEMO_CONTRAST_THREAD_ID } from "@/scripts/seed/review";
import { freshDatabase } from "../helpers/db";

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));

describe("the demo's failing commit", () => {
  it("fails edge_contrast only, and its thread and badge say so", () => {
    const t = freshDatabase();
    cleanups.push(t.dispose);
    seedDemo(t.db);
    const thread = t.db.select().from(threads).where(eq(threads.id, DEMO_CONTRAST_THREAD_ID)).get()!;
    expect(thread.title).toMatch(/Edge contrast/);
    const run = t.db.select().from(runs).where(eq(runs.id, thread.runId!)).get()!;
    expect(run.state).toBe("done");
    expect(run.expectationsFailing).toBe(1);
    const summaries = (run.expectations as { name: string; passed: boolean; margin: number | null }[] | null) ?? [];
    expect(summaries.filter((e) => !e.passed).map((e) => e.name)).toEqual(["edge_contrast"]);
    const contrast = summaries.find((e) => e.name === "edge_contrast")!;
    expect(contrast.margin).toBeLessThan(0);
    expect(contrast.margin).toBeGreaterThan(-0.05); // just under the target, as the thread says
    const badge = expectationBadges([thread.commitId!], t.db).get(thread.commitId!)!;
    expect(badge).toMatchObject({ status: "fail", failing: 1, runId: run.id });
    // seeding again adds nothing
    seedDemo(t.db);
    expect(t.db.select().from(threads).where(eq(threads.id, DEMO_CONTRAST_THREAD_ID)).all()).toHaveLength(1);
  });
});
