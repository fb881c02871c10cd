"use client";
import { useActionState } from "react";
import { Field, FormMessage, Submit } from "@/app/ui/form";
import { signIn } from "../actions";

export function SignInForm({ next }: { next: string }) {
  const [state, action] = useActionState(signIn, undefined);
  return (
    <form action={action} className="space-y-4 rounded border border-stone-300 bg-white p-5" noValidate>
      <input type="hidden" name="next" value={next} />
      <FormMessage state={state} />
      <Field label="E-mail" name="email" type="email" autoComplete="username" state={state} required />
      <Field label="Password" name="password" type="password" autoComplete="current-password" state={state} required />
      <Submit>Sign in</Submit>
    </form>
  );
}
