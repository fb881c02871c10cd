/**
 * The access step of every route handler and page, one function per kind of
 * resource: it authorises through the policy module (app/lib/policy.ts) and
 * returns the resource, so a handler reads parse → authorise (and get the
 * resource) → call the data layer → respond.
 *
 * Contract, in this order: anonymous is 401; a resource that does not exist,
 * or lives in a workspace the actor is not a member of, is 404 (the same
 * answer, so nothing leaks); a role without the action is 403.
 *
 * Route handlers pass `await requestActor(request)` and server actions
 * `await actionActor()`, which also refuse a mutating request from another
 * origin (403); pages pass the actor from `pageAccess` (app/lib/pages.ts).
 */
import type { Role } from "@/db/schema";
import { checkActionOrigin, checkOrigin, getActor } from "./auth";
import { RequestError } from "./http";
import { getCommit, getNetwork, type CommitRow, type NetworkRow } from "./networks";
import {
  authenticated,
  authorize,
  authorizeSlug,
  PolicyError,
  type Action,
  type Actor,
  type WorkspaceRef,
} from "./policy";
import { getMeasurement, type MeasurementView } from "./review/measurement-store";
import { getThreadRef, type ThreadRef } from "./review/threads";
import { getRun, type RunRow } from "./runs";

/** Who sends a route handler's request; a mutating request from another origin is 403 (tokens pass). */
export async function requestActor(request: Request): Promise<Actor | null> {
  checkOrigin(request);
  return getActor(request);
}

/** Who sends a server action (always a POST); a form from another origin is 403. */
export async function actionActor(): Promise<Actor | null> {
  await checkActionOrigin();
  return getActor();
}

/** What every access function returns besides the resource. */
export interface Allowed {
  actor: Actor;
  role: Role;
}

/** `x`, or PolicyError 404 when the URL names nothing. */
export function found<T>(x: T | null | undefined): T {
  if (x === null || x === undefined) throw new PolicyError(404, "not found");
  return x;
}

/** The workspace at /w/[slug] (an unknown slug is 404 like a workspace the actor is not in). */
export function workspaceAccess(
  actor: Actor | null,
  action: Action,
  slug: string,
): Allowed & { workspace: WorkspaceRef } {
  const a = authenticated(actor);
  return { actor: a, ...authorizeSlug(a, action, slug) };
}

export function networkAccess(actor: Actor | null, action: Action, id: string): Allowed & { network: NetworkRow } {
  const a = authenticated(actor);
  const network = found(getNetwork(id));
  return { actor: a, role: authorize(a, action, network.workspaceId), network };
}

/** A commit and its network. */
export function commitAccess(
  actor: Actor | null,
  action: Action,
  id: string,
): Allowed & { commit: CommitRow; network: NetworkRow } {
  const a = authenticated(actor);
  const commit = found(getCommit(id));
  const network = found(getNetwork(commit.networkId));
  return { actor: a, role: authorize(a, action, network.workspaceId), commit, network };
}

export function runAccess(actor: Actor | null, action: Action, id: string): Allowed & { run: RunRow } {
  const a = authenticated(actor);
  const run = found(getRun(id));
  return { actor: a, role: authorize(a, action, run.workspaceId), run };
}

export function threadAccess(actor: Actor | null, action: Action, id: string): Allowed & { thread: ThreadRef } {
  const a = authenticated(actor);
  const thread = found(getThreadRef(id));
  return { actor: a, role: authorize(a, action, thread.workspaceId), thread };
}

export function measurementAccess(
  actor: Actor | null,
  action: Action,
  id: string,
): Allowed & { measurement: MeasurementView } {
  const a = authenticated(actor);
  const measurement = found(getMeasurement(id));
  return { actor: a, role: authorize(a, action, measurement.workspaceId), measurement };
}

/**
 * Two commits compared (workspace.read on each, checked on its own so a commit
 * of a workspace the actor is not in stays a 404); 422 when they belong to
 * different networks.
 */
export function commitPairAccess(
  actor: Actor | null,
  action: Action,
  fromId: string,
  toId: string,
): Allowed & { from: CommitRow; to: CommitRow; network: NetworkRow } {
  const a = commitAccess(actor, action, fromId);
  const b = commitAccess(actor, action, toId);
  if (a.commit.networkId !== b.commit.networkId)
    throw new RequestError(422, "from and to must be commits of the same network");
  return { actor: a.actor, role: a.role, from: a.commit, to: b.commit, network: a.network };
}
