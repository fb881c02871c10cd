/**
 * Worker tokens: what a queue worker (`npm run worker`) shows the app to take
 * run chunks and post their results (`Authorization: Bearer runnel_worker_…`).
 *
 * - A workspace token is made by a workspace owner (shown once; the database
 *   keeps its SHA-256), serves that workspace's runs only, and is revoked by an
 *   owner. Its workers take chunks from the workspace's own queue.
 * - An operator token serves every workspace: the operator lists the SHA-256
 *   of each in RUNNEL_WORKER_TOKEN_HASHES (comma-separated), so the app host
 *   never holds the secret; removing a hash revokes it. `npm run worker --
 *   --new-token` prints a fresh token and its hash.
 * - A worker's results are accepted only for a chunk handed out under its
 *   token, at the attempt it was handed out (app/lib/run-ingest.ts).
 */
import { and, desc, eq, isNull } from "drizzle-orm";
import { db, type Q } from "@/db";
import { newId } from "@/db/ids";
import { workerTokens } from "@/db/schema";
import { RequestError } from "./http";
import { WORKER_TOKEN_PREFIX } from "./queue-protocol";
import { PolicyError } from "./policy";
import { newSecret, secretHash } from "./secrets";

const SHOWN = WORKER_TOKEN_PREFIX.length + 6;

/** Who posts: a worker token, and the workspace it serves (null: every workspace, an operator token). */
export interface WorkerIdentity {
  /** Row id, or `operator:<first 12 hex of the hash>` for an operator token. */
  id: string;
  workspaceId: string | null;
}

export interface WorkerTokenSummary {
  id: string;
  name: string;
  prefix: string;
  createdAt: Date;
  lastUsedAt: Date | null;
}

/** Makes a token for a workspace; the returned `token` is the only time the secret exists outside its hash. */
export function createWorkerToken(
  workspaceId: string,
  name: string,
  createdBy: string,
  d: Q = db(),
): { id: string; token: string; prefix: string } {
  const token = newSecret(WORKER_TOKEN_PREFIX);
  const id = newId("wtok");
  const prefix = token.slice(0, SHOWN);
  d.insert(workerTokens)
    .values({ id, workspaceId, name, prefix, tokenHash: secretHash(token), createdBy })
    .run();
  return { id, token, prefix };
}

/** The workspace's tokens that are not revoked, newest first. */
export function listWorkerTokens(workspaceId: string, d: Q = db()): WorkerTokenSummary[] {
  return d
    .select({
      id: workerTokens.id,
      name: workerTokens.name,
      prefix: workerTokens.prefix,
      createdAt: workerTokens.createdAt,
      lastUsedAt: workerTokens.lastUsedAt,
    })
    .from(workerTokens)
    .where(and(eq(workerTokens.workspaceId, workspaceId), isNull(workerTokens.revokedAt)))
    .orderBy(desc(workerTokens.createdAt))
    .all();
}

/** Revokes one of the workspace's tokens; false when it has no such live token. */
export function revokeWorkerToken(workspaceId: string, tokenId: string, d: Q = db()): boolean {
  return (
    d
      .update(workerTokens)
      .set({ revokedAt: new Date() })
      .where(
        and(eq(workerTokens.id, tokenId), eq(workerTokens.workspaceId, workspaceId), isNull(workerTokens.revokedAt)),
      )
      .run().changes === 1
  );
}

/** SHA-256 hex of the operator's tokens, from RUNNEL_WORKER_TOKEN_HASHES. */
function operatorHashes(): string[] {
  return (process.env.RUNNEL_WORKER_TOKEN_HASHES ?? "")
    .split(",")
    .map((h) => h.trim().toLowerCase())
    .filter((h) => /^[0-9a-f]{64}$/.test(h));
}

/** The worker a request's bearer token stands for, or null (missing, unknown or revoked). */
export function workerFromRequest(request: Request, d: Q = db()): WorkerIdentity | null {
  const auth = request.headers.get("authorization") ?? "";
  const m = /^Bearer\s+(\S+)$/i.exec(auth);
  if (!m) return null;
  const token = m[1];
  if (!token.startsWith(WORKER_TOKEN_PREFIX) || token.length > 200) return null;
  const hash = secretHash(token);
  if (operatorHashes().includes(hash)) return { id: `operator:${hash.slice(0, 12)}`, workspaceId: null };
  const row = d
    .select({ id: workerTokens.id, workspaceId: workerTokens.workspaceId, lastUsedAt: workerTokens.lastUsedAt })
    .from(workerTokens)
    .where(and(eq(workerTokens.tokenHash, hash), isNull(workerTokens.revokedAt)))
    .get();
  if (!row) return null;
  // The last use, at most once a minute (it decides whether the workspace's runs go to its own workers).
  if (!row.lastUsedAt || Date.now() - row.lastUsedAt.getTime() > 60_000)
    d.update(workerTokens).set({ lastUsedAt: new Date() }).where(eq(workerTokens.id, row.id)).run();
  return { id: row.id, workspaceId: row.workspaceId };
}

/** Whether a workspace has a worker of its own that was seen within `withinMs`. */
export function workspaceHasLiveWorker(workspaceId: string, withinMs = 120_000, d: Q = db()): boolean {
  const rows = d
    .select({ lastUsedAt: workerTokens.lastUsedAt })
    .from(workerTokens)
    .where(and(eq(workerTokens.workspaceId, workspaceId), isNull(workerTokens.revokedAt)))
    .all();
  return rows.some((r) => r.lastUsedAt !== null && Date.now() - r.lastUsedAt.getTime() < withinMs);
}

/**
 * The worker a worker-API request comes from: 401 without a valid worker token (session cookies and personal API
 * tokens do not count); 409 when this app runs its runs in its own pool (RUNNEL_QUEUE is not redis).
 */
export function requestWorker(request: Request): WorkerIdentity {
  const worker = workerFromRequest(request);
  if (!worker) throw new PolicyError(401, "a valid worker token is needed (Authorization: Bearer runnel_worker_…)");
  if (process.env.RUNNEL_QUEUE !== "redis")
    throw new RequestError(
      409,
      "this app solves its runs in its own pool (RUNNEL_QUEUE=local): it hands out no chunks",
    );
  return worker;
}
