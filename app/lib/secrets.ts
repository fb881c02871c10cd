/**
 * Random secrets for links and tokens, and the one-way form they are stored in.
 * A secret has 256 bits of entropy, so a plain SHA-256 of it is a safe lookup
 * key (no salt or slow hash needed, unlike a password).
 */
import { createHash, randomBytes } from "node:crypto";

/** `prefix` + 32 random bytes in base64url (43 characters). */
export function newSecret(prefix = ""): string {
  return prefix + randomBytes(32).toString("base64url");
}

/** SHA-256 of the secret as lower-case hex: what the database stores. */
export function secretHash(secret: string): string {
  return createHash("sha256").update(secret, "utf8").digest("hex");
}

/** A short random id for a row (16 base32-ish characters). */
export function newId(prefix: string): string {
  return prefix + randomBytes(10).toString("base64url").replace(/[-_]/g, "x").toLowerCase();
}
