import type { Metadata } from "next";
import { HoverLink } from "@/app/ui/hover-link";
import { listPendingInvitations } from "@/app/lib/invitations";
import { listMembers } from "@/app/lib/members";
import { workspacePage } from "@/app/lib/pages";
import { InviteForm, LeaveButton, MemberRoleForm, RemoveMemberButton, WithdrawInvitationButton } from "./member-forms";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Members" };

const day = (d: Date) => d.toISOString().slice(0, 10);

/** /w/[slug]/members: everyone sees the members; owners invite, change roles and remove. */
export default async function MembersPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  const page = await workspacePage(slug, `/w/${slug}/members`);
  const { workspace, actor } = page;
  const manage = page.can("workspace.manage");
  const members = listMembers(workspace.id);
  const pending = manage ? listPendingInvitations(workspace.id) : [];
  return (
    <div className="max-w-4xl space-y-8">
      <header className="space-y-1 border-b border-stone-200 pb-4">
        <p className="text-sm">
          <HoverLink href={`/w/${workspace.slug}`} className="text-moss-700 hover:underline">
            {workspace.name}
          </HoverLink>
        </p>
        <h1 className="text-2xl font-semibold">Members</h1>
        <p className="text-sm text-stone-600">
          Owners invite members and set roles. Designers change networks and start runs; reviewers start runs, comment
          and sign commits off; viewers read.
        </p>
      </header>

      <div className="overflow-x-auto">
        <table className="w-full text-left text-sm" aria-label="Members">
          <thead className="text-xs text-stone-500">
            <tr>
              <th className="py-1 font-normal">name</th>
              <th className="py-1 font-normal">e-mail</th>
              <th className="py-1 font-normal">role</th>
              <th className="py-1 font-normal">since</th>
              <th />
            </tr>
          </thead>
          <tbody>
            {members.map((m) => (
              <tr key={m.userId} className="border-t border-stone-200 align-top">
                <td className="py-2">
                  {m.name}
                  {m.userId === actor.userId ? <span className="text-stone-500"> (you)</span> : null}
                </td>
                <td className="py-2 font-mono">{m.email}</td>
                <td className="py-2">
                  {manage ? (
                    <MemberRoleForm slug={workspace.slug} userId={m.userId} name={m.name} role={m.role} />
                  ) : (
                    m.role
                  )}
                </td>
                <td className="py-2 tabular">{day(m.since)}</td>
                <td className="py-2 text-right">
                  {m.userId === actor.userId ? (
                    <LeaveButton slug={workspace.slug} />
                  ) : manage ? (
                    <RemoveMemberButton slug={workspace.slug} userId={m.userId} name={m.name} />
                  ) : null}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>

      {manage ? (
        <>
          <section className="max-w-xl space-y-3" aria-labelledby="invite-heading">
            <h2 id="invite-heading" className="text-lg font-semibold">
              Invite a member
            </h2>
            <InviteForm slug={workspace.slug} />
          </section>
          <section className="space-y-2" aria-labelledby="pending-heading">
            <h2 id="pending-heading" className="text-lg font-semibold">
              Pending invitations
            </h2>
            {pending.length === 0 ? (
              <p className="text-sm text-stone-500">None.</p>
            ) : (
              <ul className="space-y-1 text-sm" aria-label="Pending invitations">
                {pending.map((i) => (
                  <li key={i.id} className="flex items-center justify-between gap-3 border-t border-stone-200 py-2">
                    <span>
                      <span className="font-mono">{i.email}</span> as {i.role}, expires {day(i.expiresAt)}
                    </span>
                    <WithdrawInvitationButton slug={workspace.slug} invitationId={i.id} email={i.email} />
                  </li>
                ))}
              </ul>
            )}
          </section>
        </>
      ) : null}
    </div>
  );
}
