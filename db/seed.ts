import { sql } from "drizzle-orm";
import type { DB } from "./index";
import { memberships, users, workspaces, type Role } from "./schema";

/**
 * The invented demo scenario of PRODUCT.md: a fictitious team, "Larkspur
 * Microsystems", designing the LM-64 edge row. Every name and number here is
 * made up for the demo.
 */
export const DEMO_USERS: { id: string; email: string; name: string; role: Role }[] = [
  { id: "u_owner", email: "owner@larkspur.example", name: "Ada Marlow", role: "owner" },
  { id: "u_designer1", email: "designer@larkspur.example", name: "Teo Brandt", role: "designer" },
  { id: "u_designer2", email: "designer2@larkspur.example", name: "Mina Osei", role: "designer" },
  { id: "u_reviewer", email: "reviewer@larkspur.example", name: "Ruth Calder", role: "reviewer" },
  { id: "u_viewer", email: "viewer@larkspur.example", name: "Jon Pike", role: "viewer" },
];

export const DEMO_WORKSPACES = [
  {
    id: "ws_lm64",
    slug: "lm64-edge-row",
    name: "LM-64 edge row",
    description: "64-tap smoothing row for the low-power vision sensor, with its bias-current divider and mirror bank.",
  },
];

/** Loads the demo scenario. Idempotent: a second run changes nothing. */
export function seedDemo(db: DB): { users: number; workspaces: number } {
  db.transaction((tx) => {
    for (const u of DEMO_USERS) {
      tx.insert(users).values({ id: u.id, email: u.email, name: u.name }).onConflictDoNothing().run();
    }
    for (const w of DEMO_WORKSPACES) tx.insert(workspaces).values(w).onConflictDoNothing().run();
    for (const u of DEMO_USERS) {
      tx.insert(memberships).values({ workspaceId: "ws_lm64", userId: u.id, role: u.role }).onConflictDoNothing().run();
    }
  });
  const count = (t: typeof users | typeof workspaces) => db.select({ n: sql<number>`count(*)` }).from(t).get()!.n;
  return { users: count(users), workspaces: count(workspaces) };
}
