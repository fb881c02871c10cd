import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { getActor } from "@/app/lib/auth";
import { INVITATION_PROBLEMS, lookupInvitation } from "@/app/lib/invitations";
import { PASSWORD_MIN } from "@/app/lib/passwords";
import { AcceptForm } from "./accept-form";

export const dynamic = "force-dynamic";
/**
 * The token in this page's URL goes to no other site ("same-origin"). Not
 * "no-referrer": under that policy a browser sends `Origin: null` with the
 * page's own form POST (Fetch standard, "serializing a request origin"), and
 * the server action's origin check then refuses the accept before React has
 * hydrated (a 500 the accounts browser test met now and then).
 */
export const metadata: Metadata = { title: "Invitation", robots: { index: false }, referrer: "same-origin" };

const HEADINGS = {
  unknown: "Invitation not found",
  used: "Invitation already used",
  expired: "Invitation expired",
  revoked: "Invitation withdrawn",
} as const;

/** /invite/[token]: the link from an invitation e-mail. */
export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const view = lookupInvitation(token);
  if (view.state !== "valid") {
    return (
      <div className="mx-auto max-w-md space-y-4" data-invitation-state={view.state}>
        <h1 className="text-2xl font-semibold">{HEADINGS[view.state]}</h1>
        <p className="rounded border border-ember-500 bg-ember-50 p-4 text-ember-500">
          {INVITATION_PROBLEMS[view.state]}
        </p>
        {view.state === "expired" ? (
          <p className="text-sm text-stone-600">
            It expired on {view.expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC
            {view.inviterName ? <>; {view.inviterName} can send you a new one</> : null}.
          </p>
        ) : null}
        <p className="text-sm">
          <HoverLink href="/signin" className="text-moss-700 underline">
            Sign in
          </HoverLink>
        </p>
      </div>
    );
  }
  const actor = await getActor();
  const mode = view.account ? (actor?.userId === view.account.id ? "confirm" : "signin") : "create";
  return (
    <div className="mx-auto max-w-md space-y-5" data-invitation-state="valid">
      <h1 className="text-2xl font-semibold">Join {view.workspace.name}</h1>
      <p className="text-stone-600">
        {view.inviterName ?? "An owner"} invited <span className="font-mono">{view.email}</span> to the workspace “
        {view.workspace.name}” as {view.role}. The link works once and expires on{" "}
        {view.expiresAt.toISOString().slice(0, 16).replace("T", " ")} UTC.
      </p>
      {actor && actor.userId !== view.account?.id ? (
        <p className="rounded border border-stone-300 bg-white p-3 text-sm text-stone-600">
          You are signed in as {actor.email}. Accepting signs you in as {view.email} instead.
        </p>
      ) : null}
      <AcceptForm token={token} mode={mode} email={view.email} minLength={PASSWORD_MIN} />
    </div>
  );
}
