/**
 * The access matrix: every route handler (each HTTP method exported by an
 * app/**\/route.ts) and every server action (each function exported by an
 * app/**\/actions.ts) × {anonymous, non-member, viewer, reviewer, designer,
 * owner} gets exactly the status in its row. Route handlers are called once
 * with a session cookie and once with an API token (tokens carry their
 * owner's roles). Each case runs on its own copy of the seeded database.
 *
 * ADDING A ROUTE OR ACTION? Add one row to ROUTES or ACTIONS below. The test
 * "lists every route handler and server action" fails until you do.
 *
 * Columns of `expect`, in this order:
 *            [anonymous, non-member, viewer, reviewer, designer, owner]
 * Conventions: 401 anonymous (API); 404 non-member (never 403, so nothing
 * leaks); 403 a member whose role lacks the action; 200/201/204 allowed;
 * 303 a server action that redirects (Next answers a redirecting action with
 * 303); 409 a rule of the data (e.g. the last owner cannot leave).
 *
 * Placeholders `{name}` in url/body/form are filled from `vars` (made by
 * `setup` in the case's database) plus `{tokenId}` (the actor's own token).
 */
import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { invitations } from "@/db/schema";
import type { DB } from "@/db";
import { secretHash } from "@/app/lib/secrets";
import { buildAccountsFixture, WHO, WORKSPACE, type AccountsFixture } from "../helpers/accounts";
import { form, runAction, setRequest, SITE } from "../helpers/request-context";
import { startMailSink, type MailSink } from "@/scripts/lib/mail-sink";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

type Expect = [anonymous: number, outsider: number, viewer: number, reviewer: number, designer: number, owner: number];
type Vars = Record<string, string>;
type Setup = (db: DB) => Vars;

interface RouteRow {
  file: string;
  method: "GET" | "POST" | "PUT" | "PATCH" | "DELETE";
  url: string;
  params?: Vars;
  body?: unknown;
  setup?: Setup;
  expect: Expect;
}

interface ActionRow {
  file: string;
  name: string;
  form: Vars;
  setup?: Setup;
  expect: Expect;
}

const S = WORKSPACE.slug;
const PW = "a-long-enough-password";

/** A pending invitation in the case's database, for rows that withdraw or accept one. */
const withInvitation: Setup = (db) => {
  const token = `invite_${"k".repeat(40)}`;
  db.insert(invitations)
    .values({ id: "inv_case", workspaceId: WORKSPACE.id, email: "newcomer@larkspur.example", role: "reviewer", tokenHash: secretHash(token), invitedBy: "u_owner", expiresAt: new Date(Date.now() + 86_400_000) })
    .run();
  return { invitationId: "inv_case", invitationToken: token };
};

// prettier-ignore
const ROUTES: RouteRow[] = [
  //  file                                              method    url / params / body                                                          [anon, non-m, viewer, review, design, owner]
  { file: "app/api/health/route.ts",                    method: "GET",    url: "/api/health",                                                 expect: [200, 200, 200, 200, 200, 200] },
  { file: "app/api/me/route.ts",                        method: "GET",    url: "/api/me",                                                     expect: [401, 200, 200, 200, 200, 200] },
  { file: "app/api/workspaces/route.ts",                method: "GET",    url: "/api/workspaces",                                             expect: [401, 200, 200, 200, 200, 200] },
  { file: "app/api/workspaces/route.ts",                method: "POST",   url: "/api/workspaces", body: { name: "Mirror bank B" },            expect: [401, 201, 201, 201, 201, 201] },
  { file: "app/api/w/[slug]/route.ts",                  method: "GET",    url: `/api/w/${S}`, params: { slug: S },                            expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/w/[slug]/members/route.ts",          method: "GET",    url: `/api/w/${S}/members`, params: { slug: S },                    expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/w/[slug]/members/[userId]/route.ts", method: "PATCH",  url: `/api/w/${S}/members/u_designer2`, params: { slug: S, userId: "u_designer2" }, body: { role: "reviewer" },
                                                                                                                                                expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/api/w/[slug]/members/[userId]/route.ts", method: "DELETE", url: `/api/w/${S}/members/u_designer2`, params: { slug: S, userId: "u_designer2" },
                                                                                                                                                expect: [401, 404, 403, 403, 403, 204] },
  { file: "app/api/w/[slug]/invitations/route.ts",      method: "GET",    url: `/api/w/${S}/invitations`, params: { slug: S },                expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/api/w/[slug]/invitations/route.ts",      method: "POST",   url: `/api/w/${S}/invitations`, params: { slug: S }, body: { email: "newcomer@larkspur.example", role: "viewer" },
                                                                                                                                                expect: [401, 404, 403, 403, 403, 201] },
  { file: "app/api/w/[slug]/invitations/[id]/route.ts", method: "DELETE", url: `/api/w/${S}/invitations/{invitationId}`, params: { slug: S, id: "{invitationId}" }, setup: withInvitation,
                                                                                                                                                expect: [401, 404, 403, 403, 403, 204] },
];

// prettier-ignore
const ACTIONS: ActionRow[] = [
  //  file                                  export              form                                                                            [anon, non-m, viewer, review, design, owner]
  { file: "app/(account)/actions.ts",          name: "signIn",           form: { email: "owner@larkspur.example", password: "larkspur-demo", next: "/" }, expect: [303, 303, 303, 303, 303, 303] },
  { file: "app/(account)/actions.ts",          name: "signUp",           form: { name: "New Person", email: "new.person@elsewhere.example", password: PW, confirm: PW },
                                                                                                                                            expect: [303, 303, 303, 303, 303, 303] },
  { file: "app/(account)/actions.ts",          name: "signOut",          form: {},                                                        expect: [303, 303, 303, 303, 303, 303] },
  { file: "app/(account)/settings/actions.ts", name: "createToken",      form: { name: "bench script" },                                  expect: [401, 201, 201, 201, 201, 201] },
  { file: "app/(account)/settings/actions.ts", name: "revokeToken",      form: { tokenId: "{tokenId}" },                                  expect: [401, 200, 200, 200, 200, 200] },
  { file: "app/w/actions.ts",                  name: "createWorkspace",  form: { name: "Mirror bank B" },                                 expect: [401, 303, 303, 303, 303, 303] },
  { file: "app/w/[slug]/members/actions.ts",   name: "inviteMember",     form: { slug: S, email: "newcomer@larkspur.example", role: "viewer" },
                                                                                                                                            expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/w/[slug]/members/actions.ts",   name: "changeMemberRole", form: { slug: S, userId: "u_designer2", role: "reviewer" },       expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/w/[slug]/members/actions.ts",   name: "removeMember",     form: { slug: S, userId: "u_designer2" },                        expect: [401, 404, 403, 403, 403, 200] },
  // the demo workspace has one owner, who therefore cannot leave (409)
  { file: "app/w/[slug]/members/actions.ts",   name: "leaveWorkspace",   form: { slug: S },                                               expect: [401, 404, 303, 303, 303, 409] },
  { file: "app/w/[slug]/members/actions.ts",   name: "revokeInvitation", form: { slug: S, invitationId: "{invitationId}" }, setup: withInvitation,
                                                                                                                                            expect: [401, 404, 403, 403, 403, 200] },
  // the link is the credential: whoever holds it creates the invited account (and is signed in as it)
  { file: "app/invite/[token]/actions.ts",     name: "acceptInvitation", form: { token: "{invitationToken}", name: "New Comer", password: PW, confirm: PW }, setup: withInvitation,
                                                                                                                                            expect: [303, 303, 303, 303, 303, 303] },
];

const HTTP_METHODS = ["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"];

function filesNamed(name: string): string[] {
  return (fs.readdirSync("app", { recursive: true }) as string[])
    .filter((f) => path.basename(f) === name)
    .map((f) => path.join("app", f))
    .sort();
}

const fill = (s: string, vars: Vars) => s.replace(/\{(\w+)\}/g, (m, k: string) => vars[k] ?? m);
const fillAll = (o: Vars, vars: Vars): Vars => Object.fromEntries(Object.entries(o).map(([k, v]) => [k, fill(v, vars)]));

let fixture: AccountsFixture;
let sink: MailSink;

beforeAll(async () => {
  fixture = buildAccountsFixture();
  sink = await startMailSink({ onMessage: () => {} });
  process.env.RILL_MAIL_SINK_PORT = String(sink.port);
});

afterAll(async () => {
  fixture.dispose();
  await sink.close();
  delete process.env.RILL_MAIL_SINK_PORT;
});

describe("the access matrix", () => {
  it("lists every route handler and server action", async () => {
    const routes: string[] = [];
    for (const file of filesNamed("route.ts")) {
      const mod = (await import(path.resolve(file))) as Record<string, unknown>;
      for (const m of HTTP_METHODS) if (typeof mod[m] === "function") routes.push(`${m} ${file}`);
    }
    expect(ROUTES.map((r) => `${r.method} ${r.file}`).sort()).toEqual(routes.sort());

    const actions: string[] = [];
    for (const file of filesNamed("actions.ts")) {
      const mod = (await import(path.resolve(file))) as Record<string, unknown>;
      for (const [name, value] of Object.entries(mod)) if (typeof value === "function") actions.push(`${file} ${name}`);
    }
    expect(ACTIONS.map((a) => `${a.file} ${a.name}`).sort()).toEqual(actions.sort());
  });

  for (const credential of ["session cookie", "API token"] as const) {
    describe(`route handlers, signed in by ${credential}`, () => {
      for (const row of ROUTES) {
        it(`${row.method} ${row.url} → ${row.expect.join(" ")}`, async () => {
          const mod = (await import(path.resolve(row.file))) as Record<string, (req: Request, ctx: unknown) => Promise<Response>>;
          const got: number[] = [];
          for (const who of WHO) {
            const db = fixture.useCopy();
            const actor = fixture.actors[who];
            const vars = { ...(row.setup?.(db) ?? {}), tokenId: actor?.tokenId ?? "" };
            const headers = new Headers({ origin: SITE, host: new URL(SITE).host, "content-type": "application/json" });
            if (actor && credential === "session cookie") headers.set("cookie", actor.cookie);
            if (actor && credential === "API token") headers.set("authorization", `Bearer ${actor.token}`);
            const req = new Request(SITE + fill(row.url, vars), {
              method: row.method,
              headers,
              body: row.body === undefined ? undefined : fill(JSON.stringify(row.body), vars),
            });
            const res = await mod[row.method](req, { params: Promise.resolve(fillAll(row.params ?? {}, vars)) });
            got.push(res.status);
          }
          expect(Object.fromEntries(WHO.map((w, i) => [w, got[i]]))).toEqual(Object.fromEntries(WHO.map((w, i) => [w, row.expect[i]])));
        });
      }
    });
  }

  describe("server actions", () => {
    for (const row of ACTIONS) {
      it(`${row.file} ${row.name} → ${row.expect.join(" ")}`, async () => {
        const mod = (await import(path.resolve(row.file))) as Record<string, Parameters<typeof runAction>[0]>;
        const got: number[] = [];
        for (const who of WHO) {
          const db = fixture.useCopy();
          const actor = fixture.actors[who];
          const vars = { ...(row.setup?.(db) ?? {}), tokenId: actor?.tokenId ?? "" };
          setRequest({ cookies: actor ? { rill_session: actor.sessionId } : {} });
          got.push((await runAction(mod[row.name], form(fillAll(row.form, vars)))).status);
        }
        expect(Object.fromEntries(WHO.map((w, i) => [w, got[i]]))).toEqual(Object.fromEntries(WHO.map((w, i) => [w, row.expect[i]])));
      });
    }
  });

  it("answers 404 for a workspace that does not exist, whoever asks", async () => {
    const { GET } = await import("@/app/api/w/[slug]/members/route");
    fixture.useCopy();
    for (const who of WHO.slice(1)) {
      const req = new Request(`${SITE}/api/w/no-such-block/members`, { headers: { cookie: fixture.actors[who]!.cookie } });
      expect((await GET(req, { params: Promise.resolve({ slug: "no-such-block" }) })).status).toBe(404);
    }
  });
});
