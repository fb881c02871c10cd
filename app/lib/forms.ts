/**
 * What every server action returns to its form (`useActionState`): a status
 * in HTTP terms (the access-matrix test reads it), a message or error for the
 * form, and errors per field. Actions that succeed by navigating throw
 * Next's redirect instead.
 */
import { z } from "zod";
import { PolicyError } from "./policy";
import { isBusy } from "./db-busy";
import { RequestError } from "./http";

export interface FormState {
  status: number;
  message?: string;
  error?: string;
  fieldErrors?: Record<string, string[]>;
  /** What the person typed (never passwords), to refill the form. */
  values?: Record<string, string>;
  /** A secret to show once (a new API token). */
  secret?: string;
}

/** The string fields of a form, without the given (secret) ones. */
export function formValues(form: FormData, omit: string[] = []): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, v] of form.entries())
    if (typeof v === "string" && !omit.includes(k) && !k.startsWith("$ACTION")) out[k] = v;
  return out;
}

/** 400 with zod's errors per field (errors about the whole form under `form`). */
export function invalid(error: z.ZodError, values?: Record<string, string>): FormState {
  const { formErrors, fieldErrors } = z.flattenError(error) as {
    formErrors: string[];
    fieldErrors: Record<string, string[]>;
  };
  return {
    status: 400,
    error: "Please correct the fields marked below.",
    fieldErrors: formErrors.length ? { ...fieldErrors, form: formErrors } : fieldErrors,
    values,
  };
}

/**
 * The FormState for a refusal (PolicyError, RequestError); anything else is
 * rethrown — including Next's redirect and notFound signals.
 */
export function refusal(e: unknown, values?: Record<string, string>): FormState {
  if (e instanceof PolicyError) {
    const error = e.status === 404 ? "Not found." : e.status === 401 ? "Sign in first." : `Not allowed: ${e.message}.`;
    return { status: e.status, error, values };
  }
  if (isBusy(e))
    return { status: 503, error: "The database is busy with other writes; try again in a moment.", values };
  if (e instanceof RequestError) {
    // "field: what is wrong" names a field of the form: show it there.
    const m = /^([a-zA-Z]\w*): (.+)$/.exec(e.message);
    if (m && values && m[1] in values) {
      return {
        status: e.status,
        error: "Please correct the fields marked below.",
        fieldErrors: { [m[1]]: [m[2]] },
        values,
      };
    }
    return { status: e.status, error: e.message, values };
  }
  throw e;
}
