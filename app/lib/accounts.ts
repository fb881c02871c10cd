/**
 * Accounts: the forms' schemas, creating an account, and checking a
 * sign-in under the rate limits. Cookie handling lives in ./auth.
 * E-mail addresses are compared in normalised form (trimmed, lower-case).
 */
import { eq } from "drizzle-orm";
import { z } from "zod";
import { db } from "@/db";
import { users } from "@/db/schema";
import { sendMail } from "./mail";
import { weakPasswordReason } from "./password-strength";
import { hashPassword, PASSWORD_MAX, PASSWORD_MIN, verifyPassword } from "./passwords";
import { lockMessage, recordSignInAttempt, signInGate } from "./rate-limit";
import { newId } from "@/db/ids";

export const emailSchema = z
  .string({ error: "enter an e-mail address" })
  .trim()
  .toLowerCase()
  .pipe(
    z.email({ error: "enter an e-mail address like name@example.com" }).max(254, { error: "at most 254 characters" }),
  );

export const newPasswordSchema = z
  .string({ error: "choose a password" })
  .min(PASSWORD_MIN, { error: `at least ${PASSWORD_MIN} characters` })
  .max(PASSWORD_MAX, { error: `at most ${PASSWORD_MAX} characters` });

export const personNameSchema = z
  .string({ error: "enter your name" })
  .trim()
  .min(1, { error: "enter your name" })
  .max(100, { error: "at most 100 characters" });

/** A zod check for a new password: refused when easy to guess, with the reason (./password-strength). */
export function strongPassword<T extends { password: string; name?: string; email?: string }>(
  personal: (v: T) => string[] = (v) => [v.name ?? "", v.email ?? ""],
) {
  return (v: T, ctx: z.RefinementCtx) => {
    if (v.password.length < PASSWORD_MIN || v.password.length > PASSWORD_MAX) return; // already refused for its length
    const why = weakPasswordReason(v.password, personal(v));
    if (why) ctx.addIssue({ code: "custom", path: ["password"], message: why });
  };
}

export const signUpSchema = z
  .object({
    name: personNameSchema,
    email: emailSchema,
    password: newPasswordSchema,
    confirm: z.string({ error: "repeat the password" }),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], error: "the two passwords differ" })
  .superRefine(strongPassword());

export const signInSchema = z.object({
  email: emailSchema,
  password: z
    .string({ error: "enter your password" })
    .min(1, { error: "enter your password" })
    .max(PASSWORD_MAX, { error: `at most ${PASSWORD_MAX} characters` }),
});

export interface UserRecord {
  id: string;
  email: string;
  name: string;
  passwordHash: string | null;
}

export function userByEmail(email: string): UserRecord | null {
  return (
    db()
      .select({ id: users.id, email: users.email, name: users.name, passwordHash: users.passwordHash })
      .from(users)
      .where(eq(users.email, email.trim().toLowerCase()))
      .get() ?? null
  );
}

/** Makes an account; null when the address already has one. */
export async function createAccount(input: {
  name: string;
  email: string;
  password: string;
}): Promise<{ id: string } | null> {
  const email = input.email.trim().toLowerCase();
  const passwordHash = await hashPassword(input.password);
  if (userByEmail(email)) return null;
  const id = newId("u");
  const r = db().insert(users).values({ id, email, name: input.name, passwordHash }).onConflictDoNothing().run();
  return r.changes === 1 ? { id } : null;
}

/** What the sign-up form says after any accepted sign-up, whether or not the address had an account. */
export const SIGN_UP_DONE =
  "Thank you. If this address had no Runnel account, it has one now: sign in with the password you chose. If it already had one, we have sent a note to that address.";

/**
 * Sign-up that does not tell whether the address has an account (OWASP ASVS
 * 4.0 V2.x, account enumeration): either way the same answer (SIGN_UP_DONE),
 * the same work (a password hash) and one e-mail to the address — a welcome
 * for a new account, a note for an existing one (someone tried to sign up with
 * it; sign in, or ignore this). The new account is not signed in here: a
 * session at sign-up would itself tell the two cases apart.
 */
export async function signUpAccount(
  input: { name: string; email: string; password: string },
  baseUrl: string,
): Promise<void> {
  const account = await createAccount(input);
  const email = input.email.trim().toLowerCase();
  const mail = account
    ? {
        subject: "Your Runnel account",
        text: `Hello ${input.name},\n\nyour Runnel account for ${email} is ready. Sign in at ${baseUrl}/signin with the password you chose.\n`,
      }
    : {
        subject: "Someone tried to create a Runnel account with your address",
        text: `Hello,\n\nsomeone (perhaps you) asked to create a Runnel account for ${email}, which already has one. Nothing was changed. To use your account, sign in at ${baseUrl}/signin. If this was not you, you can ignore this message.\n`,
      };
  try {
    await sendMail({ to: email, ...mail });
  } catch (e) {
    // The answer must not depend on whether mail could be sent; the server log says why.
    console.error(`runnel: sign-up mail to an address was not sent: ${(e as Error).message}`);
  }
}

export type SignInCheck = { ok: true; userId: string } | { ok: false; status: 401 | 429; message: string };

/**
 * Checks a sign-in under the rate limits and records it. An unknown address
 * and a wrong password get the same answer (and take the same time).
 */
export async function checkSignIn(
  email: string,
  password: string,
  address: string,
  now = new Date(),
): Promise<SignInCheck> {
  const gate = signInGate(email, address, now);
  if (!gate.allowed) return { ok: false, status: 429, message: lockMessage(gate, now) };
  const user = userByEmail(email);
  const ok = await verifyPassword(user?.passwordHash ?? null, password);
  recordSignInAttempt(email, address, ok, now);
  if (!ok || !user)
    return { ok: false, status: 401, message: "That e-mail address and password do not match an account." };
  return { ok: true, userId: user.id };
}
