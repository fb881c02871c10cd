/**
 * Sign-in and sign-up rate limits, kept in SQLite (`sign_in_attempts`,
 * `sign_ups`), over a sliding window (OWASP ASVS 4.0 V2.2.1: anti-automation
 * that does not let an attacker lock the real user out).
 *
 * Sign-in, three limits; an attempt is refused when any is reached:
 * - a pair (account, address): PAIR_FAILURES failed attempts per window,
 *   counted since that pair's last success. Guesses from one place lock only
 *   that place out of that account: the owner elsewhere still signs in.
 * - an address: ADDRESS_FAILURES failed attempts per window over any accounts
 *   (a success does not reset it, so owning one account buys no guesses at others).
 * - an account, from addresses it has not signed in from in KNOWN_MS:
 *   ACCOUNT_FAILURES failed attempts per window over all such addresses (a
 *   guess spread over many addresses). An address the account signed in from
 *   before is not held back by it, so the owner's usual places keep working.
 * A refused attempt is not recorded and its password is not checked, so a
 * lock ends at a time known when it starts: `retryAt`.
 *
 * The address is `clientAddress` (app/lib/request-edge.ts): the connection's
 * peer, or with $RUNNEL_TRUSTED_PROXIES the address the outermost trusted proxy saw.
 *
 * Sign-up: SIGN_UPS_PER_ADDRESS attempts per address per SIGN_UP_WINDOW_MS.
 */
import { and, asc, count, desc, eq, gt, lt, or } from "drizzle-orm";
import { db } from "@/db";
import { signInAttempts, signUps } from "@/db/schema";

export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000;
export const PAIR_FAILURES = 5;
export const ADDRESS_FAILURES = 20;
export const ACCOUNT_FAILURES = 50;
/** An address counts as one the account uses when it signed in from there within this time. */
export const KNOWN_MS = 30 * 24 * 60 * 60 * 1000;
/** Failed attempts older than this are deleted when a new one is recorded (successes are kept KNOWN_MS). */
const KEEP_FAILURES_MS = 24 * 60 * 60 * 1000;

export const SIGN_UP_WINDOW_MS = 60 * 60 * 1000;
export const SIGN_UPS_PER_ADDRESS = 10;

type Scope = "pair" | "address" | "account";
export type SignInGate = { allowed: true } | { allowed: false; scope: Scope; retryAt: Date };

/** The earliest time when fewer than `limit` of these ascending failure times lie in the window; null when that is now. */
function lockedUntil(failures: Date[], limit: number): Date | null {
  if (failures.length < limit) return null;
  return new Date(failures[failures.length - limit].getTime() + SIGN_IN_WINDOW_MS);
}

/** Whether a sign-in for `email` from `address` may be tried at `now`. */
export function signInGate(email: string, address: string, now = new Date()): SignInGate {
  const d = db();
  const windowStart = new Date(now.getTime() - SIGN_IN_WINDOW_MS);
  // The account's attempts in the window and its successes (a small set: indexed by email and time).
  const successes = d
    .select({ address: signInAttempts.address, at: signInAttempts.at })
    .from(signInAttempts)
    .where(
      and(
        eq(signInAttempts.email, email),
        eq(signInAttempts.succeeded, true),
        gt(signInAttempts.at, new Date(now.getTime() - KNOWN_MS)),
      ),
    )
    .orderBy(desc(signInAttempts.at))
    .all();
  const known = new Set(successes.map((s) => s.address));
  const pairSuccess = successes.find((s) => s.address === address)?.at;
  const accountFailures = d
    .select({ address: signInAttempts.address, at: signInAttempts.at })
    .from(signInAttempts)
    .where(
      and(eq(signInAttempts.email, email), eq(signInAttempts.succeeded, false), gt(signInAttempts.at, windowStart)),
    )
    .orderBy(asc(signInAttempts.at))
    .all();
  const pairSince = pairSuccess && pairSuccess > windowStart ? pairSuccess : windowStart;
  const pair = lockedUntil(
    accountFailures.filter((f) => f.address === address && f.at > pairSince).map((f) => f.at),
    PAIR_FAILURES,
  );
  if (pair && pair > now) return { allowed: false, scope: "pair", retryAt: pair };
  const byAddress = lockedUntil(
    d
      .select({ at: signInAttempts.at })
      .from(signInAttempts)
      .where(
        and(
          eq(signInAttempts.address, address),
          eq(signInAttempts.succeeded, false),
          gt(signInAttempts.at, windowStart),
        ),
      )
      .orderBy(asc(signInAttempts.at))
      .all()
      .map((r) => r.at),
    ADDRESS_FAILURES,
  );
  if (byAddress && byAddress > now) return { allowed: false, scope: "address", retryAt: byAddress };
  if (!known.has(address)) {
    const spread = lockedUntil(
      accountFailures.filter((f) => !known.has(f.address)).map((f) => f.at),
      ACCOUNT_FAILURES,
    );
    if (spread && spread > now) return { allowed: false, scope: "account", retryAt: spread };
  }
  return { allowed: true };
}

export function recordSignInAttempt(email: string, address: string, succeeded: boolean, now = new Date()): void {
  const d = db();
  d.insert(signInAttempts).values({ email, address, succeeded, at: now }).run();
  d.delete(signInAttempts)
    .where(
      or(
        and(eq(signInAttempts.succeeded, false), lt(signInAttempts.at, new Date(now.getTime() - KEEP_FAILURES_MS))),
        lt(signInAttempts.at, new Date(now.getTime() - KNOWN_MS)),
      ),
    )
    .run();
}

const WHO: Record<Scope, string> = {
  pair: "for this account from your network address",
  address: "from your network address",
  account: "for this account from new network addresses",
};

/** "Too many … Try again in 14 minutes (after 15:02 UTC)." */
export function lockMessage(gate: { retryAt: Date; scope: Scope }, now = new Date()): string {
  const minutes = Math.max(1, Math.ceil((gate.retryAt.getTime() - now.getTime()) / 60_000));
  const clock = gate.retryAt.toISOString().slice(11, 16);
  return `Too many failed sign-ins ${WHO[gate.scope]}. Try again in ${minutes} minute${minutes === 1 ? "" : "s"} (after ${clock} UTC).`;
}

/**
 * Records a sign-up attempt from `address` when the address is under its
 * limit; otherwise records nothing and says when it may try again.
 */
export function takeSignUp(address: string, now = new Date()): { allowed: true } | { allowed: false; retryAt: Date } {
  const d = db();
  const since = new Date(now.getTime() - SIGN_UP_WINDOW_MS);
  return d.transaction(
    (tx) => {
      const recent = tx
        .select({ at: signUps.at })
        .from(signUps)
        .where(and(eq(signUps.address, address), gt(signUps.at, since)))
        .orderBy(asc(signUps.at))
        .all();
      if (recent.length >= SIGN_UPS_PER_ADDRESS) {
        return {
          allowed: false as const,
          retryAt: new Date(recent[recent.length - SIGN_UPS_PER_ADDRESS].at.getTime() + SIGN_UP_WINDOW_MS),
        };
      }
      tx.insert(signUps).values({ address, at: now }).run();
      tx.delete(signUps).where(lt(signUps.at, since)).run();
      return { allowed: true as const };
    },
    { behavior: "immediate" },
  );
}

/** How many sign-ups `address` made in the window (tests, diagnostics). */
export function signUpCount(address: string, now = new Date()): number {
  return (
    db()
      .select({ n: count() })
      .from(signUps)
      .where(and(eq(signUps.address, address), gt(signUps.at, new Date(now.getTime() - SIGN_UP_WINDOW_MS))))
      .get()?.n ?? 0
  );
}
