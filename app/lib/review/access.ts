/**
 * The access step of the review route handlers (the same contract as every
 * workbench route): mutating requests must come from our own origin (or carry
 * a token); anonymous is 401; a thing that does not exist, or lives in a
 * workspace the actor is not a member of, is 404; a role without the action is 403.
 */
import type { Role } from "@/db/schema";
import { checkOrigin, getActor } from "../auth";
import { authorize, PolicyError, type Action, type Actor } from "../policy";

/** `workspaceId` is null/undefined when the thing the URL names does not exist. */
export async function reviewAccess(
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
