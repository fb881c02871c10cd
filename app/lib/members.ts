/**
 * Members of a workspace and their roles. Invariant: a workspace always has at
 * least one owner — the last owner can be neither demoted nor removed, and
 * cannot leave (409, saying what to do instead).
 */
import { and, asc, eq, sql } from "drizzle-orm";
import { z } from "zod";
import { db } from "@/db";
import { memberships, ROLES, users, type Role } from "@/db/schema";
import { RequestError } from "./http";
import { immediate } from "./db-busy";

export const roleSchema = z.enum(ROLES, { error: `choose one of: ${ROLES.join(", ")}` });

export interface Member {
  userId: string;
  name: string;
  email: string;
  role: Role;
  since: Date;
}

const ROLE_ORDER: Record<Role, number> = { owner: 0, designer: 1, reviewer: 2, viewer: 3 };

/** Members by role (owners first), then name. */
export function listMembers(workspaceId: string): Member[] {
  const rows = db()
    .select({
      userId: users.id,
      name: users.name,
      email: users.email,
      role: memberships.role,
      since: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.workspaceId, workspaceId))
    .orderBy(asc(users.name))
    .all();
  return rows.sort((a, b) => ROLE_ORDER[a.role] - ROLE_ORDER[b.role]);
}

type Tx = Parameters<Parameters<ReturnType<typeof db>["transaction"]>[0]>[0];

function currentRole(tx: Tx, workspaceId: string, userId: string): Role {
  const m = tx
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.userId, userId)))
    .get();
  if (!m) throw new RequestError(404, "that person is not a member of this workspace");
  return m.role;
}

function ownerCount(tx: Tx, workspaceId: string): number {
  return tx
    .select({ n: sql<number>`count(*)` })
    .from(memberships)
    .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.role, "owner")))
    .get()!.n;
}

const LAST_OWNER = "the workspace needs at least one owner: make another member an owner first";

/** Sets a member's role; 404 for a non-member, 409 for demoting the last owner. */
export function changeRole(workspaceId: string, userId: string, role: Role): Member {
  immediate(db(), (tx) => {
    const was = currentRole(tx, workspaceId, userId);
    if (was === "owner" && role !== "owner" && ownerCount(tx, workspaceId) === 1)
      throw new RequestError(409, LAST_OWNER);
    tx.update(memberships)
      .set({ role })
      .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.userId, userId)))
      .run();
  });
  return listMembers(workspaceId).find((m) => m.userId === userId)!;
}

/** Removes a member (also used to leave); 404 for a non-member, 409 for the last owner. */
export function removeMember(workspaceId: string, userId: string): void {
  immediate(db(), (tx) => {
    const was = currentRole(tx, workspaceId, userId);
    if (was === "owner" && ownerCount(tx, workspaceId) === 1) throw new RequestError(409, LAST_OWNER);
    tx.delete(memberships)
      .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.userId, userId)))
      .run();
  });
}
