"use client";
import { useActionState } from "react";
import { Field, FormMessage, NewPasswordFields, Submit } from "@/app/ui/form";
import { acceptInvitation } from "./actions";

/**
 * confirm: signed in as the invited account; signin: the account exists, enter its password;
 * create: no account with that address yet, choose a name and password.
 */
export function AcceptForm(props: {
  token: string;
  mode: "confirm" | "signin" | "create";
  email: string;
  minLength: number;
}) {
  const [state, action] = useActionState(acceptInvitation, undefined);
  return (
    <form action={action} className="space-y-4 rounded border border-stone-300 bg-white p-5" noValidate>
      <input type="hidden" name="token" value={props.token} />
      <FormMessage state={state} />
      {props.mode === "signin" ? (
        <>
          <p className="text-sm text-stone-600">
            An account with <span className="font-mono">{props.email}</span> exists: enter its password to accept.
          </p>
          <Field label="Password" name="password" type="password" autoComplete="current-password" state={state} />
        </>
      ) : props.mode === "create" ? (
        <>
          <p className="text-sm text-stone-600">
            Create your account for <span className="font-mono">{props.email}</span>.
          </p>
          <Field label="Name" name="name" autoComplete="name" state={state} />
          <NewPasswordFields state={state} hint={`At least ${props.minLength} characters.`} />
        </>
      ) : null}
      <Submit>Accept invitation</Submit>
    </form>
  );
}
