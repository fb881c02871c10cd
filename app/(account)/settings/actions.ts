"use server";
/** Personal API tokens: made here, shown once, revocable. */
import { revalidatePath } from "next/cache";
import { checkActionOrigin, getActor } from "@/app/lib/auth";
import { formValues, invalid, refusal, type FormState } from "@/app/lib/forms";
import { RequestError } from "@/app/lib/http";
import { authenticated } from "@/app/lib/policy";
import { createApiToken, revokeApiToken, tokenNameSchema } from "@/app/lib/tokens";
import { z } from "zod";

export async function createToken(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form);
  try {
    await checkActionOrigin();
    const actor = authenticated(await getActor());
    const parsed = z.object({ name: tokenNameSchema }).safeParse({ name: form.get("name") ?? undefined });
    if (!parsed.success) return invalid(parsed.error, values);
    const { token } = createApiToken(actor.userId, parsed.data.name);
    revalidatePath("/settings");
    return {
      status: 201,
      message: `Token “${parsed.data.name}” made. Copy it now: it is shown only once.`,
      secret: token,
    };
  } catch (e) {
    return refusal(e, values);
  }
}

export async function revokeToken(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  try {
    await checkActionOrigin();
    const actor = authenticated(await getActor());
    const id = String(form.get("tokenId") ?? "");
    if (!revokeApiToken(actor.userId, id)) throw new RequestError(404, "no such token (it may be revoked already)");
    revalidatePath("/settings");
    return { status: 200, message: "Token revoked." };
  } catch (e) {
    return refusal(e);
  }
}
