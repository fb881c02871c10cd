"use server";
/** Sign-up, sign-in and sign-out forms. Each returns a FormState (../lib/forms) or redirects. */
import { headers } from "next/headers";
import { redirect } from "next/navigation";
import { checkSignIn, SIGN_UP_DONE, signInSchema, signUpAccount, signUpSchema } from "@/app/lib/accounts";
import {
  checkActionOrigin,
  clientAddress,
  endAllSessions,
  endSession,
  getActor,
  publicBaseUrl,
  safeNext,
  startSession,
} from "@/app/lib/auth";
import { formValues, invalid, refusal, type FormState } from "@/app/lib/forms";
import { lockMessage, takeSignUp } from "@/app/lib/rate-limit";

const SECRET_FIELDS = ["password", "confirm"];

export async function signIn(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form, SECRET_FIELDS);
  try {
    await checkActionOrigin();
    const parsed = signInSchema.safeParse({
      email: form.get("email") ?? undefined,
      password: form.get("password") ?? undefined,
    });
    if (!parsed.success) return invalid(parsed.error, values);
    const check = await checkSignIn(parsed.data.email, parsed.data.password, clientAddress(await headers()));
    if (!check.ok) return { status: check.status, error: check.message, values };
    await startSession(check.userId);
  } catch (e) {
    return refusal(e, values);
  }
  redirect(safeNext(values.next));
}

/**
 * Sign-up: the same answer whether or not the address has an account (the
 * holder is told by e-mail; app/lib/accounts.ts `signUpAccount`); at most
 * SIGN_UPS_PER_ADDRESS attempts per client address per hour.
 */
export async function signUp(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form, SECRET_FIELDS);
  try {
    await checkActionOrigin();
    const h = await headers();
    const parsed = signUpSchema.safeParse({
      name: form.get("name") ?? undefined,
      email: form.get("email") ?? undefined,
      password: form.get("password") ?? undefined,
      confirm: form.get("confirm") ?? undefined,
    });
    if (!parsed.success) return invalid(parsed.error, values);
    const gate = takeSignUp(clientAddress(h));
    if (!gate.allowed) {
      const message = lockMessage({ scope: "address", retryAt: gate.retryAt }).replace("failed sign-ins", "sign-ups");
      return { status: 429, error: message, values };
    }
    await signUpAccount(parsed.data, publicBaseUrl(h));
    return { status: 200, message: SIGN_UP_DONE, values: { email: parsed.data.email, next: values.next ?? "" } };
  } catch (e) {
    return refusal(e, values);
  }
}

/** Ends every session of the signed-in person (all browsers and devices); API tokens stay (revoke them one by one). */
export async function signOutEverywhere(): Promise<void> {
  await checkActionOrigin();
  const actor = await getActor();
  if (actor) await endAllSessions(actor.userId);
  redirect("/signin");
}

export async function signOut(): Promise<void> {
  await checkActionOrigin();
  await endSession();
  redirect("/");
}
