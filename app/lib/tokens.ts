/**
 * Personal API tokens for scripts and the `runnel` command. A token is shown
 * once, when made; the database keeps its SHA-256 only. A token acts as its
 * owner (same memberships, same roles) until revoked. Sent as
 * `Authorization: Bearer runnel_…`.
 */
import { and, desc, eq, isNull } from "drizzle-orm";
import { z } from "zod";
import { db } from "@/db";
import { apiTokens, users } from "@/db/schema";
import { isBusy } from "./db-busy";
import type { Actor } from "./policy";
import { newSecret, secretHash } from "./secrets";
import { newId } from "@/db/ids";

export const TOKEN_PREFIX = "runnel_";
/** How many characters of a token the lists show. */
const SHOWN = TOKEN_PREFIX.length + 6;

export const tokenNameSchema = z
  .string({ error: "give the token a name" })
  .trim()
  .min(1, { error: "give the token a name" })
  .max(80, { error: "at most 80 characters" });

export interface ApiTokenSummary {
  id: string;
  name: string;
  prefix: string;
  createdAt: Date;
  lastUsedAt: Date | null;
}

/** Makes a token for the user; the returned `token` is the only time the secret exists outside its hash. */
export function createApiToken(userId: string, name: string): { id: string; token: string; prefix: string } {
  const token = newSecret(TOKEN_PREFIX);
  const id = newId("tok");
  const prefix = token.slice(0, SHOWN);
  db()
    .insert(apiTokens)
    .values({ id, userId, name, prefix, tokenHash: secretHash(token) })
    .run();
  return { id, token, prefix };
}

/** The user's tokens that are not revoked, newest first. */
export function listApiTokens(userId: string): ApiTokenSummary[] {
  return db()
    .select({
      id: apiTokens.id,
      name: apiTokens.name,
      prefix: apiTokens.prefix,
      createdAt: apiTokens.createdAt,
      lastUsedAt: apiTokens.lastUsedAt,
    })
    .from(apiTokens)
    .where(and(eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .orderBy(desc(apiTokens.createdAt))
    .all();
}

/** Revokes one of the user's own tokens; false when the user has no such live token. */
export function revokeApiToken(userId: string, tokenId: string): boolean {
  const r = db()
    .update(apiTokens)
    .set({ revokedAt: new Date() })
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, userId), isNull(apiTokens.revokedAt)))
    .run();
  return r.changes === 1;
}

/** The actor a bearer token stands for, or null for an unknown or revoked token. Records the use. */
export function actorFromToken(token: string): Actor | null {
  if (!token.startsWith(TOKEN_PREFIX) || token.length > 200) return null;
  const row = db()
    .select({ id: apiTokens.id, userId: users.id, email: users.email, name: users.name })
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(and(eq(apiTokens.tokenHash, secretHash(token)), isNull(apiTokens.revokedAt)))
    .get();
  if (!row) return null;
  try {
    db().update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.id)).run();
  } catch (e) {
    // "last used" is a hint; a database busy with run writes must not refuse the request.
    if (!isBusy(e)) throw e;
  }
  return { userId: row.userId, email: row.email, name: row.name, via: "token" };
}
