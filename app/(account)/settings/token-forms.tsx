"use client";
import { useActionState } from "react";
import { Field, FormMessage, Submit } from "@/app/ui/form";
import { createToken, revokeToken } from "./actions";

export function TokenCreateForm() {
  const [state, action] = useActionState(createToken, undefined);
  return (
    <div className="space-y-3">
      <form action={action} className="flex items-end gap-3 rounded border border-stone-300 bg-white p-4" noValidate>
        <div className="flex-1">
          <Field label="Token name" name="name" state={state} hint="What will use it, e.g. “sweep script on lab PC”." />
        </div>
        <Submit>Make token</Submit>
      </form>
      <FormMessage state={state} />
      {state?.secret ? (
        <p className="rounded border border-moss-500 bg-white p-3 font-mono text-sm break-all" data-testid="new-token">
          {state.secret}
        </p>
      ) : null}
    </div>
  );
}

export function RevokeTokenButton({ tokenId, name }: { tokenId: string; name: string }) {
  const [state, action] = useActionState(revokeToken, undefined);
  return (
    <form action={action} className="inline-flex items-center gap-2">
      <input type="hidden" name="tokenId" value={tokenId} />
      {state?.error ? <span className="text-xs text-ember-500">{state.error}</span> : null}
      <button
        type="submit"
        aria-label={`Revoke ${name}`}
        className="rounded border border-ember-500 px-2 py-1 text-xs text-ember-500 hover:bg-ember-50"
      >
        Revoke
      </button>
    </form>
  );
}
