"use client";
import { useActionState } from "react";
import type { FormState } from "@/app/lib/forms";
import { Field, FormMessage, RoleSelect, Submit } from "@/app/ui/form";
import { changeMemberRole, inviteMember, leaveWorkspace, removeMember, revokeInvitation } from "./actions";

export function InviteForm({ slug }: { slug: string }) {
  const [state, action] = useActionState(inviteMember, undefined);
  return (
    <form action={action} className="space-y-4 rounded border border-stone-300 bg-white p-5" noValidate>
      <input type="hidden" name="slug" value={slug} />
      <FormMessage state={state} />
      <Field
        label="E-mail address"
        name="email"
        type="email"
        state={state}
        hint="They get a link that works once and expires in 7 days."
      />
      <div className="flex items-center gap-3">
        <label htmlFor="invite-role" className="text-sm font-medium text-stone-700">
          Role
        </label>
        <RoleSelect id="invite-role" defaultValue={state?.values?.role ?? "reviewer"} />
        <Submit>Send invitation</Submit>
      </div>
    </form>
  );
}

function InlineError({ state }: { state?: FormState }) {
  return state?.error ? (
    <span role="alert" className="block text-xs text-ember-500">
      {state.error}
    </span>
  ) : null;
}

export function MemberRoleForm({
  slug,
  userId,
  name,
  role,
}: {
  slug: string;
  userId: string;
  name: string;
  role: string;
}) {
  const [state, action] = useActionState(changeMemberRole, undefined);
  return (
    <form action={action} className="space-y-1">
      <input type="hidden" name="slug" value={slug} />
      <input type="hidden" name="userId" value={userId} />
      <span className="flex items-center gap-2">
        <RoleSelect label={`Role of ${name}`} defaultValue={role} key={role} />
        <Submit tone="quiet">Change</Submit>
      </span>
      <InlineError state={state} />
    </form>
  );
}

export function RemoveMemberButton({ slug, userId, name }: { slug: string; userId: string; name: string }) {
  const [state, action] = useActionState(removeMember, undefined);
  return (
    <form action={action}>
      <input type="hidden" name="slug" value={slug} />
      <input type="hidden" name="userId" value={userId} />
      <button
        type="submit"
        aria-label={`Remove ${name}`}
        className="rounded border border-ember-500 px-2 py-1 text-xs text-ember-500 hover:bg-ember-50"
      >
        Remove
      </button>
      <InlineError state={state} />
    </form>
  );
}

export function LeaveButton({ slug }: { slug: string }) {
  const [state, action] = useActionState(leaveWorkspace, undefined);
  return (
    <form action={action}>
      <input type="hidden" name="slug" value={slug} />
      <button
        type="submit"
        className="rounded border border-stone-300 px-2 py-1 text-xs text-stone-700 hover:bg-stone-100"
      >
        Leave
      </button>
      <InlineError state={state} />
    </form>
  );
}

export function WithdrawInvitationButton({
  slug,
  invitationId,
  email,
}: {
  slug: string;
  invitationId: string;
  email: string;
}) {
  const [state, action] = useActionState(revokeInvitation, undefined);
  return (
    <form action={action}>
      <input type="hidden" name="slug" value={slug} />
      <input type="hidden" name="invitationId" value={invitationId} />
      <button
        type="submit"
        aria-label={`Withdraw the invitation to ${email}`}
        className="rounded border border-stone-300 px-2 py-1 text-xs hover:bg-stone-100"
      >
        Withdraw
      </button>
      <InlineError state={state} />
    </form>
  );
}
