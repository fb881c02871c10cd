import { HoverLink } from "@/app/ui/hover-link";
import { signOut } from "@/app/(account)/actions";
import { getActor } from "@/app/lib/auth";
import { unreadCount } from "@/app/lib/inbox";

/**
 * The header's account corner: the signed-in person with settings and sign-out, or a sign-in link. `inMenu`: the
 * copy in the phone menu, stacked, without the test ids the wide header's copy carries.
 */
export async function AccountSlot({ inMenu = false }: { inMenu?: boolean }) {
  const actor = await getActor();
  if (!actor) {
    return (
      <HoverLink href="/signin" className="rounded border border-moss-600 px-3 py-1 text-moss-700 hover:bg-moss-50">
        Sign in
      </HoverLink>
    );
  }
  const unread = unreadCount(actor.userId);
  return (
    <div className={inMenu ? "flex flex-col items-start gap-2" : "flex items-center gap-3"}>
      <HoverLink
        href="/inbox"
        data-testid={inMenu ? undefined : "inbox-badge"}
        aria-label={unread ? `Inbox, ${unread} unread` : "Inbox"}
        className="flex items-center gap-1 text-stone-700 hover:text-moss-700"
      >
        Inbox
        {unread ? (
          <span className="min-w-5 rounded-sm bg-ochre-500 px-1 text-center text-xs font-semibold text-white tabular">
            {unread > 99 ? "99+" : unread}
          </span>
        ) : null}
      </HoverLink>
      <HoverLink href="/settings" className="text-stone-700 hover:text-moss-700" title={actor.email}>
        <span data-testid={inMenu ? undefined : "signed-in-as"}>{actor.name}</span>
      </HoverLink>
      <form action={signOut}>
        <button type="submit" className="rounded border border-stone-300 px-3 py-1 text-stone-700 hover:bg-stone-100">
          Sign out
        </button>
      </form>
    </div>
  );
}
