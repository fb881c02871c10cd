/**
 * Who is asking, and whether the request may change anything.
 *
 * - Sessions are lucia 3 sessions stored in SQLite through Drizzle
 *   (DrizzleSQLiteAdapter over db/auth-schema.ts `sessions`). The cookie is
 *   httpOnly, SameSite=Lax, path /, and Secure outside development.
 * - API requests may instead carry `Authorization: Bearer <token>` (a personal
 *   API token, app/lib/tokens.ts); then the cookie is ignored.
 * - Mutating requests (any method but GET/HEAD/OPTIONS) made with the cookie
 *   must come from our own origin: `checkOrigin` compares Origin with Host.
 *
 * Route handlers: `checkOrigin(req); const actor = await getActor(req); authorize(actor, action, workspaceId)`.
 * Pages: `const actor = await requireActor("/this/path")` (redirects anonymous to /signin?next=…).
 * Server actions: `await checkActionOrigin(); const actor = await getActor()`.
 */
import { DrizzleSQLiteAdapter } from "@lucia-auth/adapter-drizzle";
import { Lucia, TimeSpan, type Adapter, type Cookie, type DatabaseSession } from "lucia";
import { cookies, headers } from "next/headers";
import { redirect } from "next/navigation";
import { db, type DB } from "@/db";
import { sessions, users } from "@/db/schema";
import { PolicyError, type Actor } from "./policy";
import { isBusy } from "./db-busy";
import { secretHash } from "./secrets";
import { originAllowed, safeNext } from "./request-edge";
import { actorFromToken } from "./tokens";

export { clientAddress, originAllowed, publicBaseUrl, safeNext } from "./request-edge";

export const SESSION_COOKIE = "runnel_session";
export const SESSION_LIFETIME = new TimeSpan(30, "d");

/**
 * The Drizzle adapter with session ids hashed on the way in: the table keeps
 * SHA-256(id) (as API tokens keep theirs), the cookie carries the id itself.
 * lucia never sees the difference; a leaked database holds no usable session.
 */
export function hashedSessionAdapter(inner: Adapter): Adapter {
  const stored = (s: DatabaseSession, id: string): DatabaseSession => ({ ...s, id });
  return {
    async getSessionAndUser(id) {
      const [session, user] = await inner.getSessionAndUser(secretHash(id));
      return [session ? stored(session, id) : null, user];
    },
    getUserSessions: (userId) => inner.getUserSessions(userId),
    setSession: (session) => inner.setSession(stored(session, secretHash(session.id))),
    // Extending a session is best effort: under a busy database it happens on a later request.
    updateSessionExpiration: (id, expiresAt) =>
      inner.updateSessionExpiration(secretHash(id), expiresAt).catch((e: unknown) => {
        if (!isBusy(e)) throw e;
      }),
    deleteSession: (id) => inner.deleteSession(secretHash(id)),
    deleteUserSessions: (userId) => inner.deleteUserSessions(userId),
    deleteExpiredSessions: () => inner.deleteExpiredSessions(),
  };
}

function createLucia(d: DB) {
  return new Lucia(hashedSessionAdapter(new DrizzleSQLiteAdapter(d, sessions, users)), {
    sessionExpiresIn: SESSION_LIFETIME,
    sessionCookie: {
      name: SESSION_COOKIE,
      attributes: { secure: process.env.NODE_ENV !== "development", sameSite: "lax", path: "/" },
    },
    getUserAttributes: (u) => ({ email: u.email, name: u.name }),
  });
}

declare module "lucia" {
  interface Register {
    Lucia: ReturnType<typeof createLucia>;
    DatabaseUserAttributes: { email: string; name: string };
  }
}

let cached: { d: DB; lucia: ReturnType<typeof createLucia> } | null = null;

/** The lucia instance bound to the current process-wide connection (rebuilt when tests swap databases). */
export function lucia(): ReturnType<typeof createLucia> {
  const d = db();
  if (cached?.d !== d) cached = { d, lucia: createLucia(d) };
  return cached.lucia;
}

/** Sets a cookie where that is allowed (route handlers, server actions); a no-op while a page renders. */
async function trySetCookie(cookie: Cookie): Promise<void> {
  try {
    (await cookies()).set(cookie.name, cookie.value, cookie.attributes);
  } catch {
    // Server components cannot set cookies; the next action or route handler will.
  }
}

function actorOf(user: { id: string; email: string; name: string }): Actor {
  return { userId: user.id, email: user.email, name: user.name, via: "session" };
}

/**
 * The signed-in actor, or null. With a Request that carries an Authorization
 * header, only the bearer token counts (an unknown, revoked or non-Bearer
 * credential is null, i.e. 401). Otherwise the session cookie: from the
 * Request's Cookie header when a Request is given, else from `cookies()`.
 * A session in the second half of its life is extended (lucia's sliding expiry).
 */
export async function getActor(request?: Request): Promise<Actor | null> {
  const authorization = request?.headers.get("authorization");
  if (authorization != null) {
    const m = /^Bearer\s+(\S+)\s*$/i.exec(authorization);
    return m ? actorFromToken(m[1]) : null;
  }
  const l = lucia();
  const sessionId = request
    ? l.readSessionCookie(request.headers.get("cookie") ?? "")
    : ((await cookies()).get(l.sessionCookieName)?.value ?? null);
  if (!sessionId) return null;
  const { session, user } = await l.validateSession(sessionId);
  if (!session) {
    await trySetCookie(l.createBlankSessionCookie());
    return null;
  }
  if (session.fresh) await trySetCookie(l.createSessionCookie(session.id));
  return actorOf(user);
}

/** For pages: the signed-in actor, or a redirect to /signin?next=<nextPath>. */
export async function requireActor(nextPath = "/"): Promise<Actor> {
  const actor = await getActor();
  if (!actor) redirect(`/signin?next=${encodeURIComponent(safeNext(nextPath))}`);
  return actor;
}

/**
 * Starts a new session for the user and sets its cookie. Any session the
 * browser already carried is invalidated first, so a session id planted
 * before sign-in is never promoted (session fixation). lucia makes the id
 * (25 random bytes); nothing the client sends can choose it.
 */
export async function startSession(userId: string): Promise<void> {
  const l = lucia();
  const jar = await cookies();
  const previous = jar.get(l.sessionCookieName)?.value;
  if (previous) await l.invalidateSession(previous);
  await l.deleteExpiredSessions();
  const session = await l.createSession(userId, {});
  const cookie = l.createSessionCookie(session.id);
  jar.set(cookie.name, cookie.value, cookie.attributes);
}

/** Ends every session of the user (every browser, this one included) and clears this browser's cookie. */
export async function endAllSessions(userId: string): Promise<void> {
  const l = lucia();
  await l.invalidateUserSessions(userId);
  const blank = l.createBlankSessionCookie();
  (await cookies()).set(blank.name, blank.value, blank.attributes);
}

/** Ends the browser's session (if any) and clears its cookie. */
export async function endSession(): Promise<void> {
  const l = lucia();
  const jar = await cookies();
  const current = jar.get(l.sessionCookieName)?.value;
  if (current) await l.invalidateSession(current);
  const blank = l.createBlankSessionCookie();
  jar.set(blank.name, blank.value, blank.attributes);
}

/** Throws PolicyError 403 for a mutating request whose Origin does not match the Host. */
export function checkOrigin(request: Request): void {
  if (!originAllowed(request.method, request.headers, request.url)) {
    throw new PolicyError(403, "this request did not come from Runnel's own pages (Origin does not match Host)");
  }
}

/** The same check for a server action (always a POST), from the incoming headers. */
export async function checkActionOrigin(): Promise<void> {
  if (!originAllowed("POST", await headers())) {
    throw new PolicyError(403, "this form was not sent from Runnel's own pages (Origin does not match Host)");
  }
}
