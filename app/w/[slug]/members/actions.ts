"use server";
/**
 * The members page: invite, change roles, remove, leave, withdraw an
 * invitation. Every action names its workspace by the hidden `slug` field
 * and is authorised by the policy module (404 for non-members, 403 without
 * workspace.manage).
 */
import { headers } from "next/headers";
import { revalidatePath } from "next/cache";
import { redirect } from "next/navigation";
import { z } from "zod";
import { actionActor, workspaceAccess } from "@/app/lib/access";
import { publicBaseUrl } from "@/app/lib/auth";
import { formValues, invalid, refusal, type FormState } from "@/app/lib/forms";
import { inviteMember as invite, inviteSchema, revokeInvitation as revoke } from "@/app/lib/invitations";
import { MailError } from "@/app/lib/mail";
import { changeRole, removeMember as remove, roleSchema } from "@/app/lib/members";

const field = (form: FormData, name: string) => {
  const v = form.get(name);
  return typeof v === "string" ? v : undefined;
};

export async function inviteMember(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form);
  try {
    const { actor, workspace } = workspaceAccess(await actionActor(), "workspace.manage", field(form, "slug") ?? "");
    const parsed = inviteSchema.safeParse({ email: field(form, "email"), role: field(form, "role") });
    if (!parsed.success) return invalid(parsed.error, values);
    try {
      await invite({ workspace, ...parsed.data, inviter: actor, baseUrl: publicBaseUrl(await headers()) });
    } catch (e) {
      if (e instanceof MailError) return { status: 503, error: `The invitation was not sent: ${e.message}.`, values };
      throw e;
    }
    revalidatePath(`/w/${workspace.slug}/members`);
    return {
      status: 200,
      message: `Invitation sent to ${parsed.data.email} as ${parsed.data.role}.`,
      values: { role: parsed.data.role },
    };
  } catch (e) {
    return refusal(e, values);
  }
}

export async function changeMemberRole(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  const values = formValues(form);
  try {
    const { workspace } = workspaceAccess(await actionActor(), "workspace.manage", field(form, "slug") ?? "");
    const parsed = z
      .object({ userId: z.string().min(1), role: roleSchema })
      .safeParse({ userId: field(form, "userId"), role: field(form, "role") });
    if (!parsed.success) return invalid(parsed.error, values);
    const member = changeRole(workspace.id, parsed.data.userId, parsed.data.role);
    revalidatePath(`/w/${workspace.slug}/members`);
    return { status: 200, message: `${member.name} is now ${member.role}.` };
  } catch (e) {
    return refusal(e, values);
  }
}

export async function removeMember(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  try {
    const { workspace } = workspaceAccess(await actionActor(), "workspace.manage", field(form, "slug") ?? "");
    remove(workspace.id, field(form, "userId") ?? "");
    revalidatePath(`/w/${workspace.slug}/members`);
    return { status: 200, message: "Member removed." };
  } catch (e) {
    return refusal(e);
  }
}

export async function leaveWorkspace(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  try {
    const { actor, workspace } = workspaceAccess(await actionActor(), "workspace.read", field(form, "slug") ?? "");
    remove(workspace.id, actor.userId);
  } catch (e) {
    return refusal(e);
  }
  redirect("/");
}

export async function revokeInvitation(_prev: FormState | undefined, form: FormData): Promise<FormState> {
  try {
    const { workspace } = workspaceAccess(await actionActor(), "workspace.manage", field(form, "slug") ?? "");
    revoke(workspace.id, field(form, "invitationId") ?? "");
    revalidatePath(`/w/${workspace.slug}/members`);
    return { status: 200, message: "Invitation withdrawn." };
  } catch (e) {
    return refusal(e);
  }
}
