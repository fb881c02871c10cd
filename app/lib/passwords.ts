/**
 * Password hashing: argon2id through @node-rs/argon2, with the parameters of
 * OWASP's Password Storage Cheat Sheet (2023, "m=19456 (19 MiB), t=2, p=1";
 * common practice). A password is never stored, returned or logged in clear:
 * only the PHC string (`$argon2id$v=19$m=19456,t=2,p=1$salt$hash`) is kept.
 */
import { hash, hashSync, verify, type Options } from "@node-rs/argon2";

/** Argon2id = 2 in @node-rs/argon2's (const) Algorithm enum, which isolated modules cannot import. */
const ARGON2ID = 2;

export const PASSWORD_HASH_OPTIONS = {
  algorithm: ARGON2ID,
  memoryCost: 19456,
  timeCost: 2,
  parallelism: 1,
  outputLen: 32,
} as const satisfies Options;

/** Shortest and longest password accepted at sign-up and when accepting an invitation. */
export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 200;

export function hashPassword(password: string): Promise<string> {
  return hash(password, PASSWORD_HASH_OPTIONS);
}

/** True when `password` matches the PHC string; false (never a throw) for a malformed or missing hash. */
export async function verifyPassword(phc: string | null, password: string): Promise<boolean> {
  if (!phc) {
    // Spend the same time as a real check, so a missing account is not told apart by timing.
    await hash(password, PASSWORD_HASH_OPTIONS);
    return false;
  }
  try {
    return await verify(phc, password);
  } catch {
    return false;
  }
}

/** The same hash, synchronously (the demo seed, which runs outside request handling). */
export function hashPasswordSync(password: string): string {
  return hashSync(password, PASSWORD_HASH_OPTIONS);
}
