/**
 * Workspaces as their members see them. One workspace per chip or block; the
 * person who creates one becomes its owner.
 */
import { asc, eq } from "drizzle-orm";
import { z } from "zod";
import { db } from "@/db";
import { memberships, workspaces, type Role } from "@/db/schema";
import { RequestError } from "./http";
import { newId } from "@/db/ids";
import { immediate } from "./db-busy";

export interface WorkspaceSummary {
  id: string;
  slug: string;
  name: string;
  description: string;
}

export interface MyWorkspace extends WorkspaceSummary {
  role: Role;
}

export const SLUG_PATTERN = /^[a-z0-9](?:[a-z0-9-]{0,46}[a-z0-9])?$/;

export const newWorkspaceSchema = z.object({
  name: z
    .string({ error: "name the workspace" })
    .trim()
    .min(1, { error: "name the workspace" })
    .max(100, { error: "at most 100 characters" }),
  slug: z
    .string()
    .trim()
    .toLowerCase()
    .max(48, { error: "at most 48 characters" })
    .refine((s) => s === "" || SLUG_PATTERN.test(s), {
      error: "lower-case letters, digits and dashes, starting and ending with a letter or digit",
    })
    .optional(),
  description: z.string().trim().max(500, { error: "at most 500 characters" }).optional(),
});
export type NewWorkspace = z.infer<typeof newWorkspaceSchema>;

/** A URL name from a workspace name: "LM-64 edge row" → "lm-64-edge-row". */
export function slugFrom(name: string): string {
  const s = name
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 48)
    .replace(/-+$/, "");
  return s || "workspace";
}

/** The workspaces the user is a member of, by name, with the user's role. */
export function listWorkspacesFor(userId: string): MyWorkspace[] {
  return db()
    .select({
      id: workspaces.id,
      slug: workspaces.slug,
      name: workspaces.name,
      description: workspaces.description,
      role: memberships.role,
    })
    .from(memberships)
    .innerJoin(workspaces, eq(workspaces.id, memberships.workspaceId))
    .where(eq(memberships.userId, userId))
    .orderBy(asc(workspaces.name))
    .all();
}

/** The workspace with this id, or null. */
export function getWorkspace(id: string): WorkspaceSummary | null {
  return (
    db()
      .select({ id: workspaces.id, slug: workspaces.slug, name: workspaces.name, description: workspaces.description })
      .from(workspaces)
      .where(eq(workspaces.id, id))
      .get() ?? null
  );
}

/**
 * Creates a workspace with `ownerId` as its owner. Without a slug one is made
 * from the name; a taken slug given by the person is a 409, a made-up one gets
 * a number appended.
 */
export function createWorkspace(ownerId: string, input: NewWorkspace): MyWorkspace {
  const given = input.slug ? input.slug : null;
  const base = given ?? slugFrom(input.name);
  return immediate(db(), (tx) => {
    const taken = (slug: string) =>
      tx.select({ id: workspaces.id }).from(workspaces).where(eq(workspaces.slug, slug)).get() !== undefined;
    let slug = base;
    if (taken(slug)) {
      if (given) throw new RequestError(409, `slug: the address /w/${given} is taken; choose another`);
      let n = 2;
      while (taken(`${base.slice(0, 44)}-${n}`)) n++;
      slug = `${base.slice(0, 44)}-${n}`;
    }
    const id = newId("ws");
    const row = { id, slug, name: input.name, description: input.description ?? "" };
    tx.insert(workspaces).values(row).run();
    tx.insert(memberships).values({ workspaceId: id, userId: ownerId, role: "owner" }).run();
    return { ...row, role: "owner" as const };
  });
}
