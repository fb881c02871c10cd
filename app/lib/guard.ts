/**
 * The access step every workbench route handler takes before touching data:
 * mutating requests must come from our own origin (or carry a token), the
 * actor must be signed in (401), the thing must exist and be in a workspace
 * the actor belongs to (404 either way, so nothing leaks), and the actor's
 * role must allow the action (403). Built on app/lib/auth.ts and app/lib/policy.ts.
 */
import { checkOrigin, getActor } from "./auth";
import { authorize, PolicyError, type Action, type Actor } from "./policy";
import type { Role } from "@/db/schema";

/**
 * The actor allowed to do `action` in `workspaceId`; `workspaceId` is null
 * when the thing the URL names does not exist (404 after the 401 check).
 */
export async function guard(
  request: Request,
  action: Action,
  workspaceId: string | null | undefined,
): Promise<{ actor: Actor; role: Role }> {
  checkOrigin(request);
  const actor = await getActor(request);
  if (!actor) throw new PolicyError(401, "sign in first");
  if (!workspaceId) throw new PolicyError(404, "not found");
  return { actor, role: authorize(actor, action, workspaceId) };
}
