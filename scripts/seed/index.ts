import { and, inArray, isNotNull, isNull, sql } from "drizzle-orm";
import { DEMO_PASSWORD, DEMO_USERS, DEMO_WORKSPACES } from "@/app/lib/demo";
import { hashPasswordSync } from "@/app/lib/passwords";
import type { DB } from "@/db";
import { memberships, users, workspaces } from "@/db/schema";
import { seedWork } from "./work";
import { seedReview } from "./review";

export { DEMO_PASSWORD, DEMO_USERS, DEMO_WORKSPACES };

/**
 * Loads the demo scenario. Idempotent: a second run changes nothing (a demo
 * account gets its password hash only while it has none).
 */
export function seedDemo(db: DB): { users: number; workspaces: number } {
  const ids = DEMO_USERS.map((u) => u.id);
  const hashed = db
    .select({ id: users.id })
    .from(users)
    .where(and(inArray(users.id, ids), isNotNull(users.passwordHash)))
    .all();
  // argon2id takes tens of milliseconds: hash once, and only while some demo account lacks a hash.
  const hash = hashed.length < ids.length ? hashPasswordSync(DEMO_PASSWORD) : null;
  db.transaction((tx) => {
    for (const u of DEMO_USERS) {
      tx.insert(users)
        .values({ id: u.id, email: u.email, name: u.name, passwordHash: hash })
        .onConflictDoNothing()
        .run();
    }
    if (hash)
      tx.update(users)
        .set({ passwordHash: hash })
        .where(and(inArray(users.id, ids), isNull(users.passwordHash)))
        .run();
    for (const w of DEMO_WORKSPACES) tx.insert(workspaces).values(w).onConflictDoNothing().run();
    for (const u of DEMO_USERS) {
      tx.insert(memberships).values({ workspaceId: "ws_lm64", userId: u.id, role: u.role }).onConflictDoNothing().run();
    }
  });
  seedWork(db); // the workbench's demo networks, commits and finished runs (scripts/seed/work.ts)
  seedReview(db); // the review demo: a thread with changes asked, the fix and its run, the sign-off (scripts/seed/review.ts)
  const count = (t: typeof users | typeof workspaces) =>
    db
      .select({ n: sql<number>`count(*)` })
      .from(t)
      .get()!.n;
  return { users: count(users), workspaces: count(workspaces) };
}
