/**
 * Exports are written by a thread of their own (app/lib/export.ts `exportInWorker`, app/lib/export-worker.ts): its
 * bytes are those the in-process generators write, a client that goes away ends the thread and frees its slot,
 * and a run whose layout cannot be read ends the stream with an error instead of hanging.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { DB } from "@/db";
import { csvChunks, EXPORT_THREADS, exportInWorker, jsonChunks, type ExportTask } from "@/app/lib/export";
import { runLayout } from "@/app/lib/results";
import { buildAccountsFixture, type AccountsFixture } from "../helpers/accounts";
import { dividerHistory } from "../helpers/review-fixtures";

let fixture: AccountsFixture;
let db: DB;
let runId = "";

beforeAll(() => {
  fixture = buildAccountsFixture();
  db = fixture.useCopy();
  runId = dividerHistory(db).run1;
});
afterAll(() => fixture.dispose());

const task = (over: Partial<ExportTask> = {}): Omit<ExportTask, "dbFile"> => ({
  format: "csv",
  table: "devices",
  run: {
    id: runId,
    state: "done",
    reason: null,
    pointsDone: 5,
    pointsTotal: 5,
    model: { kappa: 0.7 },
    solverReason: null,
  },
  commit: { id: "c_x", ok: true, diagnostics: [] },
  ...over,
});

async function text(stream: ReadableStream<Uint8Array>): Promise<string> {
  return new Response(stream).text();
}

describe("exports in a thread of their own", () => {
  it("write the same bytes as the generators, CSV and JSON", async () => {
    const layout = runLayout(runId, db)!;
    const t = task();
    expect(await text(exportInWorker(t))).toBe([...csvChunks(t.run, layout, "devices", undefined, db)].join(""));
    const j = task({ format: "json" });
    const json = await text(exportInWorker(j));
    expect(json).toBe([...jsonChunks(j.run, j.commit, layout, db)].join(""));
    expect((JSON.parse(json) as { points: unknown[] }).points.length).toBeGreaterThan(0);
  });

  it("a client that goes away frees the thread's slot for the next export", async () => {
    for (let k = 0; k < EXPORT_THREADS + 2; k++) {
      const reader = exportInWorker(task({ table: "nodes" })).getReader();
      expect((await reader.read()).done).toBe(false);
      await reader.cancel();
    }
    // Every slot came back: one more export runs to its end.
    expect(await text(exportInWorker(task({ table: "rails" })))).toContain("point,sample");
  });

  it("a run without a layout ends the stream with an error", async () => {
    await expect(text(exportInWorker(task({ run: { ...task().run, id: "r_missing" } })))).rejects.toThrow(
      /export of run r_missing failed: the run has no results yet/,
    );
  });
});
