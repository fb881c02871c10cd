"use server";
/**
 * Accepting an invitation: as the signed-in account with the invited
 * address, or by signing in to it (password, rate-limited like /signin), or
 * by creating it (name and password). Then a new session, and the workspace.
 */
import { headers } from "next/headers";
import { redirect } from "next/navigation";
import { z } from "zod";
import { checkSignIn, newPasswordSchema, personNameSchema, strongPassword } from "@/app/lib/accounts";
import { checkActionOrigin, clientAddress, getActor, startSession } from "@/app/lib/auth";
import { formValues, invalid, refusal, type FormState } from "@/app/lib/forms";
import {
  acceptInvitation as accept,
  INVITATION_PROBLEMS,
  InvitationUnusable,
  lookupInvitation,
} from "@/app/lib/invitations";
import { hashPassword } from "@/app/lib/passwords";
import { newId } from "@/db/ids";

const newAccountSchema = z
  .object({ name: personNameSchema, password: newPasswordSchema, confirm: z.string({ error: "repeat the password" }) })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], error: "the two passwords differ" });

export async function acceptInvitation(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form, ["password", "confirm"]);
  const token = values.token ?? "";
  let slug: string;
  try {
    await checkActionOrigin();
    const view = lookupInvitation(token);
    if (view.state !== "valid")
      return { status: view.state === "unknown" ? 404 : 410, error: INVITATION_PROBLEMS[view.state] };
    const actor = await getActor();
    if (view.account && actor?.userId === view.account.id) {
      slug = accept(token, { userId: actor.userId }).slug;
    } else if (view.account) {
      const password = form.get("password");
      if (typeof password !== "string" || password === "")
        return {
          status: 400,
          error: "Please correct the fields marked below.",
          fieldErrors: { password: ["enter your password"] },
          values,
        };
      const check = await checkSignIn(view.email, password, clientAddress(await headers()));
      if (!check.ok) return { status: check.status, error: check.message, values };
      slug = accept(token, { userId: check.userId }).slug;
      await startSession(check.userId);
    } else {
      const parsed = newAccountSchema.superRefine(strongPassword((v) => [v.name, view.email])).safeParse({
        name: form.get("name") ?? undefined,
        password: form.get("password") ?? undefined,
        confirm: form.get("confirm") ?? undefined,
      });
      if (!parsed.success) return invalid(parsed.error, values);
      const account = {
        id: newId("u"),
        name: parsed.data.name,
        passwordHash: await hashPassword(parsed.data.password),
      };
      slug = accept(token, { newAccount: account }).slug;
      await startSession(account.id);
    }
  } catch (e) {
    if (e instanceof InvitationUnusable) return { status: e.state === "unknown" ? 404 : 410, error: e.message };
    return refusal(e, values);
  }
  redirect(`/w/${slug}`);
}
