"use client";
/** Form pieces shared by the account, settings, members and invitation pages. */
import type { ReactNode } from "react";
import { useFormStatus } from "react-dom";
import type { FormState } from "@/app/lib/forms";

export function Field(props: {
  label: string;
  name: string;
  state?: FormState;
  type?: string;
  defaultValue?: string;
  autoComplete?: string;
  hint?: string;
  required?: boolean;
}) {
  const errors = props.state?.fieldErrors?.[props.name];
  const id = `field-${props.name}`;
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-sm font-medium text-stone-700">
        {props.label}
      </label>
      <input
        id={id}
        name={props.name}
        type={props.type ?? "text"}
        defaultValue={props.state?.values?.[props.name] ?? props.defaultValue}
        autoComplete={props.autoComplete}
        required={props.required}
        aria-invalid={errors ? true : undefined}
        aria-describedby={errors ? `${id}-error` : props.hint ? `${id}-hint` : undefined}
        className={`block w-full rounded border bg-white px-3 py-2 text-sm focus:outline-2 focus:outline-moss-500 ${
          errors ? "border-ember-500" : "border-stone-300"
        }`}
      />
      {errors ? (
        <p id={`${id}-error`} className="text-sm text-ember-500">
          {errors.join("; ")}
        </p>
      ) : props.hint ? (
        <p id={`${id}-hint`} className="text-xs text-stone-500">
          {props.hint}
        </p>
      ) : null}
    </div>
  );
}

/** A new password and its repetition (sign-up, accepting an invitation); `hint` says what makes a good one. */
export function NewPasswordFields({ state, hint, required }: { state?: FormState; hint: string; required?: boolean }) {
  return (
    <>
      <Field
        label="Password"
        name="password"
        type="password"
        autoComplete="new-password"
        state={state}
        hint={hint}
        required={required}
      />
      <Field
        label="Repeat password"
        name="confirm"
        type="password"
        autoComplete="new-password"
        state={state}
        required={required}
      />
    </>
  );
}

export function RoleSelect(props: { name?: string; defaultValue?: string; label?: string; id?: string }) {
  return (
    <select
      id={props.id}
      name={props.name ?? "role"}
      defaultValue={props.defaultValue ?? "viewer"}
      aria-label={props.label ?? "Role"}
      className="rounded border border-stone-300 bg-white px-2 py-1.5 text-sm"
    >
      <option value="owner">owner</option>
      <option value="designer">designer</option>
      <option value="reviewer">reviewer</option>
      <option value="viewer">viewer</option>
    </select>
  );
}

/** The form-level outcome: an error (role=alert) or a confirmation (role=status). */
export function FormMessage({ state }: { state?: FormState }) {
  if (state?.error) {
    return (
      <p role="alert" className="rounded border border-ember-500 bg-ember-50 px-3 py-2 text-sm text-ember-500">
        {state.error}
      </p>
    );
  }
  if (state?.message) {
    return (
      <p role="status" className="rounded border border-moss-500 bg-moss-50 px-3 py-2 text-sm text-moss-700">
        {state.message}
      </p>
    );
  }
  return null;
}

export function Submit({ children, tone = "primary" }: { children: ReactNode; tone?: "primary" | "quiet" | "danger" }) {
  const { pending } = useFormStatus();
  const look =
    tone === "primary"
      ? "bg-moss-600 text-white hover:bg-moss-700"
      : tone === "danger"
        ? "border border-ember-500 text-ember-500 hover:bg-ember-50"
        : "border border-stone-300 text-stone-700 hover:bg-stone-100";
  return (
    <button
      type="submit"
      disabled={pending}
      className={`rounded px-3 py-1.5 text-sm font-medium disabled:opacity-60 ${look}`}
    >
      {children}
    </button>
  );
}

/** A control's outcome below it: an error (role=alert) and a confirmation (role=status), each only when there is one. */
export function InlineMessage({ error, note }: { error?: string | null; note?: string | null }) {
  return (
    <>
      {error ? (
        <p role="alert" className="text-sm text-ember-500">
          {error}
        </p>
      ) : null}
      {note ? (
        <p role="status" className="text-sm text-moss-700">
          {note}
        </p>
      ) : null}
    </>
  );
}
