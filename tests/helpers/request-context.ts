/**
 * A stand-in for Next's request context in vitest, where server actions and
 * `getActor()` without a Request read cookies and headers from `next/headers`.
 * Test files wire it with:
 *
 *   vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
 *   vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);
 *
 * and set the incoming request with `setRequest({ cookie, origin, ... })`.
 * Cookies that an action sets are applied to the jar (so a sign-in followed
 * by another action behaves like a browser) and recorded in `setCookies`.
 */
import type { FormState } from "@/app/lib/forms";

export const SITE = "http://127.0.0.1:3000";

interface CookieRecord {
  name: string;
  value: string;
  attributes: Record<string, unknown>;
}

export const requestContext = {
  jar: new Map<string, string>(),
  headers: new Headers(),
  setCookies: [] as CookieRecord[],
};

/** The incoming request: its cookies (name → value), Origin (default: our own site), Host and client address. */
export function setRequest(
  r: { cookies?: Record<string, string>; origin?: string | null; host?: string; address?: string } = {},
): void {
  requestContext.jar = new Map(Object.entries(r.cookies ?? {}));
  requestContext.setCookies = [];
  const h = new Headers({ host: r.host ?? new URL(SITE).host, "x-forwarded-for": r.address ?? "198.51.100.7" });
  const origin = r.origin === undefined ? SITE : r.origin;
  if (origin !== null) h.set("origin", origin);
  requestContext.headers = h;
}

export const nextHeadersMock = {
  cookies: async () => ({
    get: (name: string) => (requestContext.jar.has(name) ? { name, value: requestContext.jar.get(name)! } : undefined),
    getAll: () => [...requestContext.jar].map(([name, value]) => ({ name, value })),
    has: (name: string) => requestContext.jar.has(name),
    set: (name: string, value: string, attributes: Record<string, unknown> = {}) => {
      requestContext.setCookies.push({ name, value, attributes });
      if (value === "" || attributes.maxAge === 0) requestContext.jar.delete(name);
      else requestContext.jar.set(name, value);
    },
    delete: (name: string) => requestContext.jar.delete(name),
  }),
  headers: async () => requestContext.headers,
};

export const nextCacheMock = {
  revalidatePath: () => {},
  revalidateTag: () => {},
  updateTag: () => {},
  refresh: () => {},
};

/** A FormData from plain fields. */
export function form(fields: Record<string, string>): FormData {
  const f = new FormData();
  for (const [k, v] of Object.entries(fields)) f.set(k, v);
  return f;
}

export interface ActionOutcome {
  /** The FormState's status; 303 for a redirect (as Next answers a server action that redirects); 404 for notFound(). */
  status: number;
  state?: FormState;
  location?: string;
}

/** Runs a server action the way a form would, and says what the browser would get. */
export async function runAction(
  action: (prev: FormState | undefined, f: FormData) => Promise<FormState | void>,
  f: FormData,
): Promise<ActionOutcome> {
  try {
    const state = (await action(undefined, f)) ?? undefined;
    return { status: state?.status ?? 200, state };
  } catch (e) {
    const digest = String((e as { digest?: unknown }).digest ?? "");
    if (digest.startsWith("NEXT_REDIRECT")) return { status: 303, location: digest.split(";")[2] };
    if (digest.startsWith("NEXT_HTTP_ERROR_FALLBACK;404")) return { status: 404 };
    const status = (e as { status?: unknown }).status;
    if (typeof status === "number") return { status };
    throw e;
  }
}
