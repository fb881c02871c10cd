import type { Metadata } from "next";
import { requireActor } from "@/app/lib/auth";
import { Submit } from "@/app/ui/form";
import { signOutEverywhere } from "../actions";
import { listApiTokens } from "@/app/lib/tokens";
import { RevokeTokenButton, TokenCreateForm } from "./token-forms";

export const metadata: Metadata = { title: "Settings" };

const when = (d: Date | null) => (d ? `${d.toISOString().slice(0, 16).replace("T", " ")} UTC` : "never");

export default async function SettingsPage() {
  const actor = await requireActor("/settings");
  const tokens = listApiTokens(actor.userId);
  return (
    <div className="max-w-3xl space-y-8">
      <section className="space-y-1">
        <h1 className="text-2xl font-semibold">Settings</h1>
        <p className="text-stone-600">
          Signed in as {actor.name} (<span className="font-mono">{actor.email}</span>).
        </p>
      </section>
      <section className="space-y-3" aria-labelledby="sessions-heading">
        <h2 id="sessions-heading" className="text-lg font-semibold">
          Sessions
        </h2>
        <p className="text-sm text-stone-600">
          Signing out everywhere ends your session in every browser and on every device, this one included (for a
          browser you lost, or a shared computer you forgot to sign out of). API tokens are not sessions: revoke them
          below.
        </p>
        <form action={signOutEverywhere}>
          <Submit tone="danger">Sign out everywhere</Submit>
        </form>
      </section>
      <section className="space-y-3" aria-labelledby="tokens-heading">
        <h2 id="tokens-heading" className="text-lg font-semibold">
          API tokens
        </h2>
        <p className="text-sm text-stone-600">
          A personal token lets scripts and the <code className="font-mono">runnel</code> command act as you, with your
          roles in each workspace. Send it as <code className="font-mono">Authorization: Bearer &lt;token&gt;</code>. It
          is shown once, when made; Runnel keeps only a hash. Revoke a token you no longer use.
        </p>
        <TokenCreateForm />
        {tokens.length === 0 ? (
          <p className="text-sm text-stone-500">No tokens.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm" aria-label="API tokens">
              <thead className="text-xs text-stone-500">
                <tr>
                  <th className="py-1 font-normal">name</th>
                  <th className="py-1 font-normal">starts with</th>
                  <th className="py-1 font-normal">made</th>
                  <th className="py-1 font-normal">last used</th>
                  <th />
                </tr>
              </thead>
              <tbody>
                {tokens.map((t) => (
                  <tr key={t.id} className="border-t border-stone-200">
                    <td className="py-2">{t.name}</td>
                    <td className="py-2 font-mono">{t.prefix}…</td>
                    <td className="py-2 tabular">{when(t.createdAt)}</td>
                    <td className="py-2 tabular">{when(t.lastUsedAt)}</td>
                    <td className="py-2 text-right">
                      <RevokeTokenButton tokenId={t.id} name={t.name} />
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </section>
    </div>
  );
}
