"use server";
/** Creating a workspace (home page). */
import { redirect } from "next/navigation";
import { checkActionOrigin, getActor } from "@/app/lib/auth";
import { formValues, invalid, refusal, type FormState } from "@/app/lib/forms";
import { authenticated } from "@/app/lib/policy";
import { createWorkspace as create, newWorkspaceSchema } from "@/app/lib/workspaces";

export async function createWorkspace(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form);
  let slug: string;
  try {
    await checkActionOrigin();
    const actor = authenticated(await getActor());
    const parsed = newWorkspaceSchema.safeParse({
      name: form.get("name") ?? undefined,
      slug: form.get("slug") ?? undefined,
      description: form.get("description") ?? undefined,
    });
    if (!parsed.success) return invalid(parsed.error, values);
    slug = create(actor.userId, parsed.data).slug;
  } catch (e) {
    return refusal(e, values);
  }
  redirect(`/w/${slug}`);
}
