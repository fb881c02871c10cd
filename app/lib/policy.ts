/**
 * The one policy module: every route handler and server action asks it whether
 * an actor may do an action in a workspace. Contract:
 * - a workspace (or anything inside it) that the actor is not a member of is
 *   NotFound (404), never Forbidden, so nothing leaks that it exists;
 * - a member whose role lacks the action is Forbidden (403);
 * - anonymous is Unauthenticated (401) for API routes (pages redirect to sign-in).
 */
import { and, eq } from "drizzle-orm";
import { db } from "@/db";
import { memberships, workspaces, type Role } from "@/db/schema";

export const ACTIONS = [
  "workspace.read", // see the workspace, its networks, commits, runs, threads, measurements
  "workspace.manage", // rename the workspace, invite and remove members, change roles
  "network.write", // create, rename, upload networks; commit
  "run.start", // start and cancel runs
  "measurement.write", // upload and delete bench measurements
  "thread.comment", // open threads and comment
  "commit.signoff", // sign a commit off or ask for changes
] as const;
export type Action = (typeof ACTIONS)[number];

/** What each role may do (README.md, Accounts and access, says it in words; the access matrix test checks it). */
export const ROLE_ACTIONS: Record<Role, readonly Action[]> = {
  owner: [
    "workspace.read",
    "workspace.manage",
    "network.write",
    "run.start",
    "measurement.write",
    "thread.comment",
    "commit.signoff",
  ],
  designer: ["workspace.read", "network.write", "run.start", "measurement.write", "thread.comment"],
  reviewer: ["workspace.read", "run.start", "thread.comment", "commit.signoff"],
  viewer: ["workspace.read"],
};

/** Who is asking: a signed-in user (by session cookie or API token). */
export interface Actor {
  userId: string;
  email: string;
  name: string;
  via: "session" | "token";
}

export class PolicyError extends Error {
  constructor(
    readonly status: 401 | 403 | 404,
    message: string,
  ) {
    super(message);
  }
}

export function roleAllows(role: Role, action: Action): boolean {
  return ROLE_ACTIONS[role].includes(action);
}

/** The actor's role in the workspace, or null when not a member (or the workspace does not exist). */
export function roleIn(actor: Actor | null, workspaceId: string): Role | null {
  if (!actor) return null;
  const m = db()
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.workspaceId, workspaceId), eq(memberships.userId, actor.userId)))
    .get();
  return m?.role ?? null;
}

/** True when the actor may do `action` in the workspace. */
export function can(actor: Actor | null, action: Action, workspaceId: string): boolean {
  const role = roleIn(actor, workspaceId);
  return role !== null && roleAllows(role, action);
}

/** For account-level actions (own tokens, creating a workspace): the actor, or PolicyError 401. */
export function authenticated(actor: Actor | null): Actor {
  if (!actor) throw new PolicyError(401, "sign in first");
  return actor;
}

/**
 * Throws PolicyError unless the actor may do `action` in the workspace;
 * returns the actor's role. Not a member → 404; member without the right → 403.
 */
export function authorize(actor: Actor | null, action: Action, workspaceId: string): Role {
  if (!actor) throw new PolicyError(401, "sign in first");
  const role = roleIn(actor, workspaceId);
  if (role === null) throw new PolicyError(404, "not found");
  if (!roleAllows(role, action)) throw new PolicyError(403, `a ${role} cannot do this (${action})`);
  return role;
}

/** The JSON response for a PolicyError (route handlers: `catch (e) { return policyResponse(e) }`). */
export function policyResponse(e: unknown): Response {
  if (e instanceof PolicyError) return Response.json({ error: e.message }, { status: e.status });
  throw e;
}

/** A workspace as the policy resolves it from a URL. */
export interface WorkspaceRef {
  id: string;
  slug: string;
  name: string;
  description: string;
}

/**
 * `authorize` for a workspace named by its URL slug (/w/[slug], /api/w/[slug]/…):
 * anonymous → 401; an unknown slug → 404, exactly like a workspace the actor is
 * not a member of; then as `authorize`. Returns the workspace and the actor's role.
 */
export function authorizeSlug(
  actor: Actor | null,
  action: Action,
  slug: string,
): { workspace: WorkspaceRef; role: Role } {
  if (!actor) throw new PolicyError(401, "sign in first");
  const workspace = db()
    .select({ id: workspaces.id, slug: workspaces.slug, name: workspaces.name, description: workspaces.description })
    .from(workspaces)
    .where(eq(workspaces.slug, slug))
    .get();
  if (!workspace) throw new PolicyError(404, "not found");
  return { workspace, role: authorize(actor, action, workspace.id) };
}
