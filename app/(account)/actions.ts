"use server";
/** Sign-up, sign-in and sign-out forms. Each returns a FormState (../lib/forms) or redirects. */
import { headers } from "next/headers";
import { redirect } from "next/navigation";
import { checkSignIn, createAccount, signInSchema, signUpSchema } from "@/app/lib/accounts";
import { checkActionOrigin, clientAddress, endSession, safeNext, startSession } from "@/app/lib/auth";
import { formValues, invalid, refusal, type FormState } from "@/app/lib/forms";

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

export async function signUp(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form, SECRET_FIELDS);
  try {
    await checkActionOrigin();
    const parsed = signUpSchema.safeParse({
      name: form.get("name") ?? undefined,
      email: form.get("email") ?? undefined,
      password: form.get("password") ?? undefined,
      confirm: form.get("confirm") ?? undefined,
    });
    if (!parsed.success) return invalid(parsed.error, values);
    const account = await createAccount(parsed.data);
    if (!account) {
      return {
        status: 409,
        error: "Please correct the fields marked below.",
        fieldErrors: { email: ["an account with this address exists: sign in instead"] },
        values,
      };
    }
    await startSession(account.id);
  } catch (e) {
    return refusal(e, values);
  }
  redirect(safeNext(values.next));
}

export async function signOut(): Promise<void> {
  await checkActionOrigin();
  await endSession();
  redirect("/");
}
