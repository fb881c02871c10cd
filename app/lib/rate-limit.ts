/**
 * Sign-in rate limits, kept in SQLite (`sign_in_attempts`), per account and
 * per client address, over a sliding window:
 * - an account (the normalised e-mail typed, whether or not it exists) gets
 *   ACCOUNT_FAILURES failed attempts per window, counted since its last
 *   successful sign-in;
 * - an address gets ADDRESS_FAILURES failed attempts per window, whatever the
 *   accounts (a success does not reset it, so owning one account does not
 *   buy more guesses at others).
 * A refused attempt is not recorded and its password is not checked, so a
 * lock ends at a time known when it starts: `retryAt`.
 */
import { and, asc, desc, eq, gt, lt } from "drizzle-orm";
import { db } from "@/db";
import { signInAttempts } from "@/db/schema";

export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000;
export const ACCOUNT_FAILURES = 5;
export const ADDRESS_FAILURES = 20;
/** Attempts older than this are deleted when a new one is recorded. */
const KEEP_MS = 24 * 60 * 60 * 1000;

export type SignInGate = { allowed: true } | { allowed: false; scope: "account" | "address"; retryAt: Date };

/** The earliest time when fewer than `limit` of these ascending failure times lie in the window; null when that is now. */
function lockedUntil(failures: Date[], limit: number): Date | null {
  if (failures.length < limit) return null;
  return new Date(failures[failures.length - limit].getTime() + SIGN_IN_WINDOW_MS);
}

/** Whether a sign-in for `email` from `address` may be tried at `now`. */
export function signInGate(email: string, address: string, now = new Date()): SignInGate {
  const windowStart = new Date(now.getTime() - SIGN_IN_WINDOW_MS);
  const lastSuccess = db()
    .select({ at: signInAttempts.at })
    .from(signInAttempts)
    .where(and(eq(signInAttempts.email, email), eq(signInAttempts.succeeded, true)))
    .orderBy(desc(signInAttempts.at))
    .limit(1)
    .get()?.at;
  const accountSince = lastSuccess && lastSuccess > windowStart ? lastSuccess : windowStart;
  const failuresOf = (
    column: typeof signInAttempts.email | typeof signInAttempts.address,
    value: string,
    since: Date,
  ) =>
    db()
      .select({ at: signInAttempts.at })
      .from(signInAttempts)
      .where(and(eq(column, value), eq(signInAttempts.succeeded, false), gt(signInAttempts.at, since)))
      .orderBy(asc(signInAttempts.at))
      .all()
      .map((r) => r.at);
  const account = lockedUntil(failuresOf(signInAttempts.email, email, accountSince), ACCOUNT_FAILURES);
  if (account && account > now) return { allowed: false, scope: "account", retryAt: account };
  const byAddress = lockedUntil(failuresOf(signInAttempts.address, address, windowStart), ADDRESS_FAILURES);
  if (byAddress && byAddress > now) return { allowed: false, scope: "address", retryAt: byAddress };
  return { allowed: true };
}

export function recordSignInAttempt(email: string, address: string, succeeded: boolean, now = new Date()): void {
  const d = db();
  d.insert(signInAttempts).values({ email, address, succeeded, at: now }).run();
  d.delete(signInAttempts)
    .where(lt(signInAttempts.at, new Date(now.getTime() - KEEP_MS)))
    .run();
}

/** "Too many … Try again in 14 minutes (after 15:02 UTC)." */
export function lockMessage(gate: Extract<SignInGate, { allowed: false }>, now = new Date()): string {
  const minutes = Math.max(1, Math.ceil((gate.retryAt.getTime() - now.getTime()) / 60_000));
  const clock = gate.retryAt.toISOString().slice(11, 16);
  const who = gate.scope === "account" ? "for this account" : "from your network address";
  return `Too many failed sign-ins ${who}. Try again in ${minutes} minute${minutes === 1 ? "" : "s"} (after ${clock} UTC).`;
}
