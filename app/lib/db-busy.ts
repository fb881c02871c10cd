/**
 * SQLite under concurrency, as the request thread sees it.
 *
 * Contract
 * - The request thread's connection waits at most REQUEST_BUSY_TIMEOUT_MS for
 *   a lock (db/index.ts `db()`), so a write never holds the event loop for
 *   seconds while a run worker commits a batch of points.
 * - `retryBusy(fn)` runs a synchronous transaction and, when SQLite answers
 *   SQLITE_BUSY, runs it again after a short asynchronous pause (the event
 *   loop serves other requests meanwhile), for up to RETRY_BUDGET_MS; then it
 *   throws `DatabaseBusy`. A transaction that failed with SQLITE_BUSY has
 *   rolled back, so running it again is safe.
 * - `DatabaseBusy` and a bare SQLITE_BUSY become 503 with Retry-After
 *   (app/lib/http.ts `handle`, app/lib/forms.ts `refusal`), never a 500.
 * Every read-then-write transaction begins IMMEDIATE (it takes the write lock
 * first, so a concurrent writer makes it wait instead of failing when it
 * upgrades from a stale read).
 */
import type { Q } from "@/db";

type Tx = Parameters<Parameters<Q["transaction"]>[0]>[0];

export { REQUEST_BUSY_TIMEOUT_MS } from "@/db";
export const RETRY_BUDGET_MS = 5_000;
/** What a 503 asks the client to wait before trying again, in seconds. */
export const RETRY_AFTER_S = 1;

/** The database stayed locked by other writers (run workers, other requests) for longer than the retry budget. */
export class DatabaseBusy extends Error {
  override name = "DatabaseBusy";
  constructor() {
    super("the database is busy with other writes (runs storing results); try again in a moment");
  }
}

/** True for better-sqlite3's SqliteError codes that mean "locked by someone else, try later". */
export function isBusy(e: unknown): boolean {
  if (e instanceof DatabaseBusy) return true;
  const code = (e as { code?: unknown } | null)?.code;
  return typeof code === "string" && /^SQLITE_(BUSY|LOCKED)/.test(code);
}

const pause = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));

/** Runs `fn` (a whole transaction) until it does not fail with SQLITE_BUSY, or the budget is spent (DatabaseBusy). */
export async function retryBusy<T>(fn: () => T, budgetMs = RETRY_BUDGET_MS): Promise<T> {
  const deadline = Date.now() + budgetMs;
  for (let attempt = 0; ; attempt++) {
    try {
      return fn();
    } catch (e) {
      if (!isBusy(e)) throw e;
      if (Date.now() >= deadline) throw new DatabaseBusy();
      await pause(Math.min(200, 10 * 2 ** attempt) * (0.5 + Math.random()));
    }
  }
}

/** The 503 answer for a busy database. */
export function busyResponse(): Response {
  return Response.json(
    { error: new DatabaseBusy().message },
    { status: 503, headers: { "retry-after": String(RETRY_AFTER_S), "cache-control": "no-store" } },
  );
}

/**
 * `d.transaction(fn)` begun IMMEDIATE: the write lock is taken first, so a
 * transaction that reads, then writes never fails on the upgrade (SQLITE_BUSY
 * without waiting) when another connection wrote in between.
 */
export function immediate<T>(d: Q, fn: (tx: Tx) => T): T {
  return d.transaction(fn, { behavior: "immediate" });
}
