/**
 * What pages share: the signed-in actor (else a redirect to
 * /signin?next=…) and the resource through the access functions of
 * app/lib/access.ts (a resource the actor may not see — or that does not
 * exist — is a 404 page).
 */
import { notFound } from "next/navigation";
import type { Role } from "@/db/schema";
import { workspaceAccess } from "./access";
import { requireActor } from "./auth";
import { PolicyError, roleAllows, type Action, type Actor, type WorkspaceRef } from "./policy";

/**
 * `access(actor)` for the signed-in actor of a page at `path`: anonymous
 * visitors are sent to sign in, a PolicyError 404 renders the not-found page.
 */
export async function pageAccess<T>(path: string, access: (actor: Actor) => T): Promise<T> {
  const actor = await requireActor(path);
  try {
    return access(actor);
  } catch (e) {
    if (e instanceof PolicyError && e.status === 404) notFound();
    throw e;
  }
}

export interface WorkspacePage {
  actor: Actor;
  workspace: WorkspaceRef;
  role: Role;
  can(action: Action): boolean;
}

/** The workspace at /w/[slug] for a member, with what their role allows. */
export async function workspacePage(slug: string, path: string): Promise<WorkspacePage> {
  const { actor, workspace, role } = await pageAccess(path, (a) => workspaceAccess(a, "workspace.read", slug));
  return { actor, workspace, role, can: (action) => roleAllows(role, action) };
}
