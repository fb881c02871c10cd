/**
 * Row ids and content hashes, shared by the data layer (app/lib), the run
 * worker and the demo seed.
 */
import { createHash, randomBytes } from "node:crypto";

/** SHA-256 of a UTF-8 text as lower-case hex (commit ids, stored secrets). */
export function sha256Hex(text: string): string {
  return createHash("sha256").update(text, "utf8").digest("hex");
}

const BASE32 = "abcdefghijklmnopqrstuvwxyz234567";

/** A random id with a kind prefix, e.g. `n_3kq8…` (16 base32 characters, 80 bits). */
export function newId(prefix: string): string {
  const bytes = randomBytes(16);
  let s = "";
  for (let i = 0; i < 16; i++) s += BASE32[bytes[i] & 31];
  return `${prefix}_${s}`;
}
