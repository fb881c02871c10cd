"use client";
import { useActionState } from "react";
import { HoverLink } from "@/app/ui/hover-link";
import { Field, FormMessage, NewPasswordFields, Submit } from "@/app/ui/form";
import { signUp } from "../actions";

export function SignUpForm({ next, minLength }: { next: string; minLength: number }) {
  const [state, action] = useActionState(signUp, undefined);
  if (state?.status === 200) {
    // The same answer whether or not the address already had an account (app/lib/accounts.ts signUpAccount).
    return (
      <div className="space-y-4 rounded border border-stone-300 bg-white p-5">
        <FormMessage state={state} />
        <HoverLink
          href={`/signin?next=${encodeURIComponent(next)}`}
          className="inline-block rounded bg-moss-600 px-3 py-1.5 text-sm text-white hover:bg-moss-700"
        >
          Sign in
        </HoverLink>
      </div>
    );
  }
  return (
    <form action={action} className="space-y-4 rounded border border-stone-300 bg-white p-5" noValidate>
      <input type="hidden" name="next" value={next} />
      <FormMessage state={state} />
      <Field label="Name" name="name" autoComplete="name" state={state} required />
      <Field label="E-mail" name="email" type="email" autoComplete="email" state={state} required />
      <NewPasswordFields
        state={state}
        hint={`At least ${minLength} characters, not easy to guess: a phrase of several unrelated words works well.`}
        required
      />
      <Submit>Create account</Submit>
    </form>
  );
}
