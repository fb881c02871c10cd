"use client";
import { useActionState } from "react";
import { Field, FormMessage, Submit } from "@/app/ui/form";
import { signUp } from "../actions";

export function SignUpForm({ next, minLength }: { next: string; minLength: number }) {
  const [state, action] = useActionState(signUp, undefined);
  return (
    <form action={action} className="space-y-4 rounded border border-stone-300 bg-white p-5" noValidate>
      <input type="hidden" name="next" value={next} />
      <FormMessage state={state} />
      <Field label="Name" name="name" autoComplete="name" state={state} required />
      <Field label="E-mail" name="email" type="email" autoComplete="email" state={state} required />
      <Field
        label="Password"
        name="password"
        type="password"
        autoComplete="new-password"
        state={state}
        hint={`At least ${minLength} characters.`}
        required
      />
      <Field
        label="Repeat password"
        name="confirm"
        type="password"
        autoComplete="new-password"
        state={state}
        required
      />
      <Submit>Create account</Submit>
    </form>
  );
}
