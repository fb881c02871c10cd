/**
 * Goal-seeks asked on a run (POST /api/runs/[id]/seek), kept with it: written once when the search has ended,
 * listed newest first on the run page's Goal-seek view for every member of the workspace.
 */
import { desc, eq } from "drizzle-orm";
import { db, type Q } from "@/db";
import { newId } from "@/db/ids";
import { runSeeks, users } from "@/db/schema";
import { immediate } from "./db-busy";
import type { SeekSpec, SeekView } from "./sensitivity-view";

/** Most seeks listed per run (the newest). */
export const SEEKS_LISTED = 50;

export interface StoredSeek {
  id: string;
  createdAt: number;
  createdByName: string;
  spec: SeekSpec;
  view: SeekView;
}

export function storeSeek(runId: string, createdBy: string, spec: SeekSpec, view: SeekView, d: Q = db()): string {
  const id = newId("sk");
  immediate(d, (tx) =>
    tx
      .insert(runSeeks)
      .values({ id, runId, createdBy, spec, seeks: view.seeks, error: view.ok ? null : view.error })
      .run(),
  );
  return id;
}

export function listSeeks(runId: string, d: Q = db()): StoredSeek[] {
  return d
    .select({
      id: runSeeks.id,
      createdAt: runSeeks.createdAt,
      name: users.name,
      spec: runSeeks.spec,
      seeks: runSeeks.seeks,
      error: runSeeks.error,
    })
    .from(runSeeks)
    .innerJoin(users, eq(users.id, runSeeks.createdBy))
    .where(eq(runSeeks.runId, runId))
    .orderBy(desc(runSeeks.createdAt))
    .limit(SEEKS_LISTED)
    .all()
    .map((r) => ({
      id: r.id,
      createdAt: r.createdAt.getTime(),
      createdByName: r.name,
      spec: r.spec,
      view: r.error === null ? { ok: true, seeks: r.seeks } : { ok: false, error: r.error, seeks: [] },
    }));
}
