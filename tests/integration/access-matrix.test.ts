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
import { comments, invitations, runs, threads, workerTokens } from "@/db/schema";
import { saveMeasurement } from "@/app/lib/review/measurement-store";
import { dividerHistory } from "../helpers/review-fixtures";
import { createNetwork } from "@/app/lib/networks";
import { executeRun } from "@/app/lib/run-exec";
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

/** A workspace worker token in the case's database, for the row that revokes one. */
const withWorkerToken: Setup = (db) => {
  db.insert(workerTokens)
    .values({
      id: "wtok_case",
      workspaceId: WORKSPACE.id,
      name: "lab machine",
      prefix: "runnel_worker_abcdef",
      tokenHash: secretHash("runnel_worker_case"),
      createdBy: "u_owner",
    })
    .run();
  return { workerTokenId: "wtok_case" };
};

/** A pending invitation in the case's database, for rows that withdraw or accept one. */
const withInvitation: Setup = (db) => {
  const token = `invite_${"k".repeat(40)}`;
  db.insert(invitations)
    .values({
      id: "inv_case",
      workspaceId: WORKSPACE.id,
      email: "newcomer@larkspur.example",
      role: "reviewer",
      tokenHash: secretHash(token),
      invitedBy: "u_owner",
      expiresAt: new Date(Date.now() + 86_400_000),
    })
    .run();
  return { invitationId: "inv_case", invitationToken: token };
};

/** A network with one commit and one finished run (solved in-process), for the workbench rows. */
const DIVIDER =
  "rail vdd = 1.8\nrail gnd = 0\nrail g1 = 0.71\nrail g2 = 0.69\nnfet m1 gate=g1 source=tail drain=vdd\nnfet m2 gate=g2 source=tail drain=vdd\ninject tailsink from=tail to=gnd value=20n\nprobe ratio = current(m1) / current(m2)\n";
/** A network of `text` committed by a designer, and a queued run `id` of it. */
function queuedRun(db: DB, id: string, name: string, text: string) {
  const { network, commit } = createNetwork({ workspaceId: WORKSPACE.id, name, text, authorId: "u_designer1" }, db);
  db.insert(runs)
    .values({
      id,
      commitId: commit!.id,
      networkId: network.id,
      workspaceId: WORKSPACE.id,
      createdBy: "u_designer1",
      pointsTotal: 1,
      timeLimitMs: 60_000,
    })
    .run();
  return { network, commit: commit! };
}
/** The divider committed and a queued run of it (cancel rows). */
const withQueuedRun: Setup = (db) => {
  const { network, commit } = queuedRun(db, "r_case", "Matrix divider", DIVIDER);
  return { networkId: network.id, commitId: commit.id, runId: "r_case" };
};
/** As withQueuedRun, with the run finished. */
const withRun: Setup = (db) => {
  const made = withQueuedRun(db);
  executeRun("r_case", {}, db);
  return made;
};

/** Review rows: the divider with two commits and a done sweep run of each, a thread on the newer commit, a measurement. */
const withReview: Setup = (db) => {
  const h = dividerHistory(db);
  db.insert(threads)
    .values({
      id: "t_case",
      workspaceId: WORKSPACE.id,
      networkId: h.network.id,
      commitId: h.second.id,
      runId: h.run2,
      title: "m2 width",
      createdBy: "u_designer1",
    })
    .run();
  db.insert(comments)
    .values({
      id: "c_case",
      threadId: "t_case",
      workspaceId: WORKSPACE.id,
      authorId: "u_designer1",
      body: `Widened m2, see [[run ${h.run2}]]`,
    })
    .run();
  const m = saveMeasurement(
    {
      networkId: h.network.id,
      name: "bench.csv",
      bytes: new TextEncoder().encode(BENCH_CSV),
      createdBy: "u_designer1",
    },
    db,
  );
  return {
    networkId: h.network.id,
    fromId: h.first.id,
    toId: h.second.id,
    runId: h.run2,
    threadId: "t_case",
    measurementId: m.id,
  };
};
/** A thread on a commit whose done run fails an expectation (a sign-off needs a written reason). */
const withFailingExpectation: Setup = (db) => {
  const { network, commit } = queuedRun(
    db,
    "r_fail",
    "Matrix failing divider",
    `${DIVIDER}expect impossible_power = power() <= 1p\n`,
  );
  executeRun("r_fail", {}, db);
  db.insert(threads)
    .values({
      id: "t_fail",
      workspaceId: WORKSPACE.id,
      networkId: network.id,
      commitId: commit!.id,
      runId: "r_fail",
      title: "power",
      createdBy: "u_designer1",
    })
    .run();
  return { threadId: "t_fail" };
};
const BENCH_CSV = "iin [nA], ratio [1]\n1, 0.51\n10, 0.5\n100, 0.49\n";

// prettier-ignore
const ROUTES: RouteRow[] = [
  //  file                                              method    url / params / body                                                          [anon, non-m, viewer, review, design, owner]
  { file: "app/api/health/route.ts",                    method: "GET",    url: "/api/health",                                                 expect: [200, 200, 200, 200, 200, 200] },
  { file: "app/favicon.ico/route.ts",                   method: "GET",    url: "/favicon.ico",                                                expect: [200, 200, 200, 200, 200, 200] },
  { file: "app/api/me/route.ts",                        method: "GET",    url: "/api/me",                                                     expect: [401, 200, 200, 200, 200, 200] },
  { file: "app/api/inbox/route.ts",                     method: "GET",    url: "/api/inbox",                                                  expect: [401, 200, 200, 200, 200, 200] },
  { file: "app/api/inbox/read/route.ts",                method: "POST",   url: "/api/inbox/read", body: { all: true },                        expect: [401, 200, 200, 200, 200, 200] },
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
  { file: "app/api/w/[slug]/worker-tokens/route.ts",    method: "GET",    url: `/api/w/${S}/worker-tokens`, params: { slug: S },              expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/api/w/[slug]/worker-tokens/route.ts",    method: "POST",   url: `/api/w/${S}/worker-tokens`, params: { slug: S }, body: { name: "lab machine" },
                                                                                                                                                expect: [401, 404, 403, 403, 403, 201] },
  { file: "app/api/w/[slug]/worker-tokens/[id]/route.ts", method: "DELETE", url: `/api/w/${S}/worker-tokens/{workerTokenId}`, params: { slug: S, id: "{workerTokenId}" }, setup: withWorkerToken,
                                                                                                                                                expect: [401, 404, 403, 403, 403, 204] },
  // the worker API takes worker tokens only: a session or a personal API token is 401 for everyone
  { file: "app/api/worker/hello/route.ts",              method: "GET",    url: "/api/worker/hello",                                           expect: [401, 401, 401, 401, 401, 401] },
  { file: "app/api/worker/claims/route.ts",             method: "POST",   url: "/api/worker/claims", body: { runId: "{runId}", chunk: 0 }, setup: withRun,
                                                                                                                                                expect: [401, 401, 401, 401, 401, 401] },
  { file: "app/api/worker/commits/[id]/route.ts",       method: "GET",    url: "/api/worker/commits/{commitId}", params: { id: "{commitId}" }, setup: withRun,
                                                                                                                                                expect: [401, 401, 401, 401, 401, 401] },
  { file: "app/api/worker/chunks/[run]/[chunk]/points/route.ts", method: "POST", url: "/api/worker/chunks/{runId}/0/points?attempt=1", params: { run: "{runId}", chunk: "0" }, setup: withRun,
                                                                                                                                                expect: [401, 401, 401, 401, 401, 401] },
  { file: "app/api/worker/chunks/[run]/[chunk]/end/route.ts", method: "POST", url: "/api/worker/chunks/{runId}/0/end", params: { run: "{runId}", chunk: "0" }, setup: withRun, body: { outcome: "stopped", attempt: 1 },
                                                                                                                                                expect: [401, 401, 401, 401, 401, 401] },
  // workbench: networks, commits, runs, results
  { file: "app/api/w/[slug]/networks/route.ts",         method: "GET",    url: `/api/w/${S}/networks`, params: { slug: S },                   expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/w/[slug]/networks/route.ts",         method: "GET",    url: `/api/w/${S}/networks?archived=1`, params: { slug: S },        expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/api/w/[slug]/networks/route.ts",         method: "POST",   url: `/api/w/${S}/networks`, params: { slug: S }, body: { name: "Mirror bank C", text: DIVIDER },
                                                                                                                                                expect: [401, 404, 403, 403, 201, 201] },
  { file: "app/api/networks/[id]/route.ts",             method: "GET",    url: "/api/networks/{networkId}", params: { id: "{networkId}" }, setup: withRun, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/networks/[id]/route.ts",             method: "PATCH",  url: "/api/networks/{networkId}", params: { id: "{networkId}" }, setup: withRun, body: { name: "Renamed" },
                                                                                                                                                expect: [401, 404, 403, 403, 200, 200] },
  { file: "app/api/networks/[id]/route.ts",             method: "PATCH",  url: "/api/networks/{networkId}", params: { id: "{networkId}" }, setup: withRun, body: { archived: true },
                                                                                                                                                expect: [401, 404, 403, 403, 200, 200] },
  { file: "app/api/networks/[id]/route.ts",             method: "PATCH",  url: "/api/networks/{networkId}", params: { id: "{networkId}" }, setup: withRun, body: { archived: false },
                                                                                                                                                expect: [401, 404, 403, 403, 403, 200] },
  { file: "app/api/networks/[id]/commits/route.ts",     method: "GET",    url: "/api/networks/{networkId}/commits", params: { id: "{networkId}" }, setup: withRun,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/networks/[id]/commits/route.ts",     method: "POST",   url: "/api/networks/{networkId}/commits", params: { id: "{networkId}" }, setup: withRun,
                                                        body: { parent: "{commitId}", text: `${DIVIDER}# wider tail next\n`, message: "note" },   expect: [401, 404, 403, 403, 201, 201] },
  { file: "app/api/commits/[id]/route.ts",              method: "GET",    url: "/api/commits/{commitId}", params: { id: "{commitId}" }, setup: withRun, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/commits/[id]/sensitivity/route.ts",  method: "GET",    url: "/api/commits/{commitId}/sensitivity", params: { id: "{commitId}" }, setup: withRun, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/commits/[id]/structure/route.ts",    method: "GET",    url: "/api/commits/{commitId}/structure?q=x", params: { id: "{commitId}" }, setup: withRun, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/runs/route.ts",                      method: "GET",    url: "/api/runs?commit={commitId}", setup: withRun,                 expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/runs/route.ts",                      method: "POST",   url: "/api/runs", body: { commit: "{commitId}" }, setup: withRun,   expect: [401, 404, 403, 201, 201, 201] },
  { file: "app/api/runs/[id]/route.ts",                 method: "GET",    url: "/api/runs/{runId}", params: { id: "{runId}" }, setup: withRun, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/runs/[id]/cancel/route.ts",          method: "POST",   url: "/api/runs/{runId}/cancel", params: { id: "{runId}" }, setup: withQueuedRun,
                                                                                                                                                expect: [401, 404, 403, 200, 200, 200] },
  { file: "app/api/runs/[id]/results/route.ts",         method: "GET",    url: "/api/runs/{runId}/results?view=point&point=0", params: { id: "{runId}" }, setup: withRun,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/runs/[id]/seek/route.ts",            method: "GET",    url: "/api/runs/{runId}/seek", params: { id: "{runId}" }, setup: withRun,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/runs/[id]/seek/route.ts",            method: "POST",   url: "/api/runs/{runId}/seek", params: { id: "{runId}" }, setup: withRun,
    body: { param: "x", low: 0, high: 1, probe: "y", target: 0 },                                                                               expect: [401, 404, 403, 200, 200, 200] },
  { file: "app/api/runs/[id]/sensitivity/route.ts",     method: "GET",    url: "/api/runs/{runId}/sensitivity", params: { id: "{runId}" }, setup: withRun,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/runs/[id]/export/route.ts",          method: "GET",    url: "/api/runs/{runId}/export?format=csv", params: { id: "{runId}" }, setup: withRun,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  // review: comparisons, threads, verdicts, measurements
  { file: "app/api/compare/route.ts",                   method: "GET",    url: "/api/compare?from={fromId}&to={toId}", setup: withReview,    expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/compare/entities/route.ts",          method: "GET",    url: "/api/compare/entities?from={fromId}&to={toId}&analysis=sweep%20iin&kind=node&quantity=voltage", setup: withReview,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/compare/series/route.ts",            method: "GET",    url: "/api/compare/series?from={fromId}&to={toId}&analysis=sweep%20iin", setup: withReview,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/comments/preview/route.ts",          method: "POST",   url: "/api/comments/preview", setup: withReview, body: { threadId: "{threadId}", body: "see [[run {runId}]], @ruth" },
                                                                                                                                                expect: [401, 404, 403, 200, 200, 200] },
  { file: "app/api/threads/route.ts",                   method: "GET",    url: "/api/threads?networkId={networkId}", setup: withReview,      expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/threads/route.ts",                   method: "POST",   url: "/api/threads", setup: withReview, body: { commitId: "{toId}", runId: "{runId}", title: "ratio", body: "Is 1:2 intended?" },
                                                                                                                                                expect: [401, 404, 403, 201, 201, 201] },
  { file: "app/api/threads/[id]/route.ts",              method: "GET",    url: "/api/threads/{threadId}", params: { id: "{threadId}" }, setup: withReview, expect: [401, 404, 200, 200, 200, 200] },
  // a verdict needs commit.signoff: a viewer and a designer cannot sign off
  { file: "app/api/threads/[id]/comments/route.ts",     method: "POST",   url: "/api/threads/{threadId}/comments", params: { id: "{threadId}" }, setup: withReview, body: { body: "Looks right.", verdict: "signed_off" },
                                                                                                                                                expect: [401, 404, 403, 201, 403, 201] },
  // a sign-off over a failing expectation without a written reason: 422 for those who may sign off
  { file: "app/api/threads/[id]/comments/route.ts",     method: "POST",   url: "/api/threads/{threadId}/comments", params: { id: "{threadId}" }, setup: withFailingExpectation, body: { body: "", verdict: "signed_off" },
                                                                                                                                                expect: [401, 404, 403, 422, 403, 422] },
  { file: "app/api/commits/[id]/review/route.ts",       method: "GET",    url: "/api/commits/{toId}/review", params: { id: "{toId}" }, setup: withReview, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/networks/[id]/measurements/route.ts", method: "GET",   url: "/api/networks/{networkId}/measurements", params: { id: "{networkId}" }, setup: withReview,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/networks/[id]/measurements/route.ts", method: "POST",  url: "/api/networks/{networkId}/measurements", params: { id: "{networkId}" }, setup: withReview, body: { name: "b.csv", csv: BENCH_CSV },
                                                                                                                                                expect: [401, 404, 403, 403, 201, 201] },
  { file: "app/api/measurements/[id]/route.ts",         method: "GET",    url: "/api/measurements/{measurementId}", params: { id: "{measurementId}" }, setup: withReview, expect: [401, 404, 200, 200, 200, 200] },
  { file: "app/api/measurements/[id]/route.ts",         method: "DELETE", url: "/api/measurements/{measurementId}", params: { id: "{measurementId}" }, setup: withReview, expect: [401, 404, 403, 403, 204, 204] },
  { file: "app/api/measurements/[id]/overlay/route.ts", method: "GET",    url: "/api/measurements/{measurementId}/overlay?run={runId}", params: { id: "{measurementId}" }, setup: withReview,
                                                                                                                                                expect: [401, 404, 200, 200, 200, 200] },
];

// prettier-ignore
const ACTIONS: ActionRow[] = [
  //  file                                  export              form                                                                            [anon, non-m, viewer, review, design, owner]
  { file: "app/(account)/actions.ts",          name: "signIn",           form: { email: "owner@larkspur.example", password: "larkspur-demo", next: "/" }, expect: [303, 303, 303, 303, 303, 303] },
  { file: "app/(account)/actions.ts",          name: "signUp",           form: { name: "New Person", email: "new.person@elsewhere.example", password: PW, confirm: PW },
                                                                                                                                            expect: [200, 200, 200, 200, 200, 200] },
  { file: "app/(account)/actions.ts",          name: "signOut",          form: {},                                                        expect: [303, 303, 303, 303, 303, 303] },
  { file: "app/(account)/actions.ts",          name: "signOutEverywhere", form: {},                                                       expect: [303, 303, 303, 303, 303, 303] },
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
const fillAll = (o: Vars, vars: Vars): Vars =>
  Object.fromEntries(Object.entries(o).map(([k, v]) => [k, fill(v, vars)]));

let fixture: AccountsFixture;
let sink: MailSink;

beforeAll(async () => {
  fixture = buildAccountsFixture();
  sink = await startMailSink({ onMessage: () => {} });
  process.env.RUNNEL_MAIL_SINK_PORT = String(sink.port);
});

afterAll(async () => {
  fixture.dispose();
  await sink.close();
  delete process.env.RUNNEL_MAIL_SINK_PORT;
});

describe("the access matrix", () => {
  it("lists every route handler and server action", async () => {
    const routes: string[] = [];
    for (const file of filesNamed("route.ts")) {
      const mod = (await import(path.resolve(file))) as Record<string, unknown>;
      for (const m of HTTP_METHODS) if (typeof mod[m] === "function") routes.push(`${m} ${file}`);
    }
    // A route may have more than one row (a rule of the data checked per role, e.g. a sign-off's reason).
    expect([...new Set(ROUTES.map((r) => `${r.method} ${r.file}`))].sort()).toEqual(routes.sort());

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
          const mod = (await import(path.resolve(row.file))) as Record<
            string,
            (req: Request, ctx: unknown) => Promise<Response>
          >;
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
          expect(Object.fromEntries(WHO.map((w, i) => [w, got[i]]))).toEqual(
            Object.fromEntries(WHO.map((w, i) => [w, row.expect[i]])),
          );
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
          setRequest({ cookies: actor ? { runnel_session: actor.sessionId } : {} });
          got.push((await runAction(mod[row.name], form(fillAll(row.form, vars)))).status);
        }
        expect(Object.fromEntries(WHO.map((w, i) => [w, got[i]]))).toEqual(
          Object.fromEntries(WHO.map((w, i) => [w, row.expect[i]])),
        );
      });
    }
  });

  it("answers 404 for a workspace that does not exist, whoever asks", async () => {
    const { GET } = await import("@/app/api/w/[slug]/members/route");
    fixture.useCopy();
    for (const who of WHO.slice(1)) {
      const req = new Request(`${SITE}/api/w/no-such-block/members`, {
        headers: { cookie: fixture.actors[who]!.cookie },
      });
      expect((await GET(req, { params: Promise.resolve({ slug: "no-such-block" }) })).status).toBe(404);
    }
  });
});
