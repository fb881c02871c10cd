/**
 * Calls route handlers in-process as one of the fixture's actors (session
 * cookie), JSON in and out, as a browser on the site's own origin would.
 */
import { afterAll, beforeAll } from "vitest";
import type { DB } from "@/db";
import { closeInteractivePool } from "@/app/lib/interactive";
import { buildAccountsFixture, type AccountsFixture, type Who } from "./accounts";
import { SITE } from "./request-context";

type Handler = (req: Request, ctx: { params: Promise<Record<string, string>> }) => Promise<Response>;

export interface ApiResult {
  status: number;
  json: Record<string, unknown>;
  text: string;
  headers: Headers;
}

/** `call(who, "runs/route", "POST", "/api/runs", params, body)`: the handler module under app/api/. */
export function apiCaller(fixture: AccountsFixture) {
  return async function call(
    who: Who,
    file: string,
    method: string,
    url: string,
    params: Record<string, string> = {},
    body?: unknown,
  ): Promise<ApiResult> {
    const mod = (await import(/* @vite-ignore */ `@/app/api/${file}`)) as Record<string, Handler>;
    const headers = new Headers({ origin: SITE, host: new URL(SITE).host, "content-type": "application/json" });
    const actor = fixture.actors[who];
    if (actor) headers.set("cookie", actor.cookie);
    const res = await mod[method](
      new Request(SITE + url, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) }),
      { params: Promise.resolve(params) },
    );
    const text = await res.text();
    let json: Record<string, unknown> = {};
    try {
      json = JSON.parse(text) as Record<string, unknown>;
    } catch {
      json = { text };
    }
    return { status: res.status, json, text, headers: res.headers };
  };
}

/**
 * A test file's demo database and its callers: the accounts fixture built and copied before the file's tests, the
 * interactive pool closed and the fixture removed after them. Call it at the file's top level (it registers the
 * hooks); read `db` and `call` inside tests. The file still mocks next/headers and next/cache itself (vi.mock is
 * hoisted per file).
 */
export function apiFixtureForFile(): {
  readonly db: DB;
  readonly call: ReturnType<typeof apiCaller>;
  readonly fixture: AccountsFixture;
} {
  let fixture: AccountsFixture | undefined;
  let d: DB | undefined;
  let call: ReturnType<typeof apiCaller> | undefined;
  beforeAll(() => {
    fixture = buildAccountsFixture();
    d = fixture.useCopy();
    call = apiCaller(fixture);
  });
  afterAll(async () => {
    await closeInteractivePool();
    fixture?.dispose();
  });
  return {
    get db() {
      return d!;
    },
    get call() {
      return call!;
    },
    get fixture() {
      return fixture!;
    },
  };
}
