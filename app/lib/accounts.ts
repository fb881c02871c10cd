/**
 * Accounts: the forms' schemas, creating an account, and checking a
 * sign-in under the rate limits. Cookie handling lives in ./auth.
 * E-mail addresses are compared in normalised form (trimmed, lower-case).
 */
import { eq } from "drizzle-orm";
import { z } from "zod";
import { db } from "@/db";
import { users } from "@/db/schema";
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

export const signUpSchema = z
  .object({
    name: personNameSchema,
    email: emailSchema,
    password: newPasswordSchema,
    confirm: z.string({ error: "repeat the password" }),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], error: "the two passwords differ" });

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
  if (userByEmail(email)) return null;
  const passwordHash = await hashPassword(input.password);
  const id = newId("u");
  const r = db().insert(users).values({ id, email, name: input.name, passwordHash }).onConflictDoNothing().run();
  return r.changes === 1 ? { id } : null;
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
