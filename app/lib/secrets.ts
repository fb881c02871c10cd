/**
 * Random secrets for links and tokens, and the one-way form they are stored in.
 * A secret has 256 bits of entropy, so a plain SHA-256 of it is a safe lookup
 * key (no salt or slow hash needed, unlike a password).
 */
import { randomBytes } from "node:crypto";
import { sha256Hex } from "@/db/ids";

/** `prefix` + 32 random bytes in base64url (43 characters). */
export function newSecret(prefix = ""): string {
  return prefix + randomBytes(32).toString("base64url");
}

/** SHA-256 of the secret as lower-case hex: what the database stores. */
export function secretHash(secret: string): string {
  return sha256Hex(secret);
}
