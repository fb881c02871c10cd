/**
 * What workspace pages share: the signed-in actor (else a redirect to
 * /signin?next=…), the workspace at /w/[slug] through the policy module (a
 * workspace the actor is not a member of — or that does not exist — is a 404
 * page), and the actor's role.
 */
import { notFound } from "next/navigation";
import type { Role } from "@/db/schema";
import { requireActor } from "./auth";
import { authorizeSlug, PolicyError, roleAllows, type Action, type Actor, type WorkspaceRef } from "./policy";

export interface WorkspacePage {
  actor: Actor;
  workspace: WorkspaceRef;
  role: Role;
  can(action: Action): boolean;
}

export async function workspacePage(slug: string, path: string): Promise<WorkspacePage> {
  const actor = await requireActor(path);
  try {
    const { workspace, role } = authorizeSlug(actor, "workspace.read", slug);
    return { actor, workspace, role, can: (action) => roleAllows(role, action) };
  } catch (e) {
    if (e instanceof PolicyError && e.status === 404) notFound();
    throw e;
  }
}
