"use client";
import { useActionState } from "react";
import { Field, FormMessage, Submit } from "@/app/ui/form";
import { createWorkspace } from "./actions";

export function NewWorkspaceForm() {
  const [state, action] = useActionState(createWorkspace, undefined);
  return (
    <form action={action} className="space-y-4 rounded border border-stone-300 bg-white p-5" noValidate>
      <FormMessage state={state} />
      <Field
        label="Name"
        name="name"
        state={state}
        hint="One workspace per chip or block, e.g. “LM-64 edge row”."
        required
      />
      <Field
        label="Address (optional)"
        name="slug"
        state={state}
        hint="Lower-case letters, digits and dashes; made from the name when empty."
      />
      <Field label="Description (optional)" name="description" state={state} />
      <Submit>Create workspace</Submit>
    </form>
  );
}
