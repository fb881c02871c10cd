/**
 * Sign-in, sessions, passwords, rate limits, API tokens and the Origin check.
 * Server actions run with a stand-in for Next's request context
 * (../helpers/request-context); route handlers get real Requests.
 */
import fs from "node:fs";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import { signIn, signOut, signOutEverywhere, signUp } from "@/app/(account)/actions";
import { createToken, revokeToken } from "@/app/(account)/settings/actions";
import { GET as getMe } from "@/app/api/me/route";
import { POST as postWorkspace } from "@/app/api/workspaces/route";
import { checkSignIn, SIGN_UP_DONE } from "@/app/lib/accounts";
import { getActor, originAllowed, SESSION_COOKIE } from "@/app/lib/auth";
import { PASSWORD_HASH_OPTIONS, verifyPassword } from "@/app/lib/passwords";
import {
  ACCOUNT_FAILURES,
  ADDRESS_FAILURES,
  PAIR_FAILURES,
  SIGN_IN_WINDOW_MS,
  SIGN_UPS_PER_ADDRESS,
} from "@/app/lib/rate-limit";
import { clientAddress, SOCKET_ADDRESS_HEADER } from "@/app/lib/request-edge";
import { secretHash } from "@/app/lib/secrets";
import { db } from "@/db";
import { DEMO_PASSWORD } from "@/scripts/seed/index";
import { apiTokens, sessions, users } from "@/db/schema";
import { buildAccountsFixture, type AccountsFixture } from "../helpers/accounts";
import { form, requestContext, runAction, setRequest, SITE } from "../helpers/request-context";

vi.mock("next/headers", async () => (await import("../helpers/request-context")).nextHeadersMock);
vi.mock("next/cache", async () => (await import("../helpers/request-context")).nextCacheMock);

let fixture: AccountsFixture;
beforeAll(() => {
  fixture = buildAccountsFixture();
});
afterAll(() => fixture.dispose());
beforeEach(() => {
  fixture.useCopy();
  setRequest();
});

const OWNER = "owner@larkspur.example";
const sessionCookie = () => requestContext.setCookies.filter((c) => c.name === SESSION_COOKIE).at(-1);

describe("passwords", () => {
  it("are hashed with argon2id, m=19456 KiB, t=2, p=1 (OWASP Password Storage Cheat Sheet, 2023; common practice)", async () => {
    const password = "correct horse battery";
    const out = await runAction(
      signUp,
      form({ name: "Nia Hale", email: "Nia.Hale@Elsewhere.example ", password, confirm: password }),
    );
    expect(out).toMatchObject({ status: 200, state: { message: SIGN_UP_DONE } });
    const row = db().select().from(users).where(eq(users.email, "nia.hale@elsewhere.example")).get()!;
    expect(row.passwordHash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$[A-Za-z0-9+/]{22}\$[A-Za-z0-9+/]{43}$/);
    expect(PASSWORD_HASH_OPTIONS).toMatchObject({ memoryCost: 19456, timeCost: 2, parallelism: 1, algorithm: 2 });
    expect(await verifyPassword(row.passwordHash, password)).toBe(true);
    expect(await verifyPassword(row.passwordHash, "correct horse battery!")).toBe(false);
    expect(await verifyPassword("not a phc string", password)).toBe(false);
  });

  it("are never stored or logged in clear", async () => {
    const password = "plain-text-never-stored-7c1";
    const logged: string[] = [];
    const spies = (["log", "info", "warn", "error", "debug"] as const).map((m) =>
      vi.spyOn(console, m).mockImplementation((...args: unknown[]) => void logged.push(args.map(String).join(" "))),
    );
    try {
      await runAction(signUp, form({ name: "Pat Quill", email: "pat@elsewhere.example", password, confirm: password }));
      setRequest();
      await runAction(signIn, form({ email: "pat@elsewhere.example", password: `${password}x` }));
      await runAction(signIn, form({ email: "pat@elsewhere.example", password }));
    } finally {
      spies.forEach((s) => s.mockRestore());
    }
    expect(logged.join("\n")).not.toContain(password);
    db().$client.pragma("wal_checkpoint(TRUNCATE)");
    expect(fs.readFileSync(process.env.RUNNEL_DB!).includes(Buffer.from(password))).toBe(false);
  });

  it("sign-up explains each bad field and keeps what was typed (but not the password)", async () => {
    const out = await runAction(
      signUp,
      form({ name: "", email: "not-an-address", password: "short", confirm: "other" }),
    );
    expect(out.status).toBe(400);
    expect(out.state?.fieldErrors).toEqual({
      name: ["enter your name"],
      email: ["enter an e-mail address like name@example.com"],
      password: ["at least 10 characters"],
      confirm: ["the two passwords differ"],
    });
    expect(out.state?.values).toEqual({ name: "", email: "not-an-address" });
    // an address that has an account gets the same answer as a new one (checked in "sign-up" below)
    const mismatch = await runAction(
      signUp,
      form({ name: "Bo", email: "bo@elsewhere.example", password: "long enough pw", confirm: "long enough px" }),
    );
    expect(mismatch.state?.fieldErrors).toEqual({ confirm: ["the two passwords differ"] });
  });
});

describe("sessions", () => {
  it("sign-in sets an httpOnly, SameSite=Lax, Secure (outside development) session cookie for path /", async () => {
    const out = await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD, next: "/w/lm64-edge-row" }));
    expect(out).toMatchObject({ status: 303, location: "/w/lm64-edge-row" });
    const c = sessionCookie()!;
    expect(c.attributes).toMatchObject({ httpOnly: true, sameSite: "lax", secure: true, path: "/" });
    expect(c.value).toMatch(/^[a-z0-9]{40}$/);
    expect((await getActor())?.email).toBe(OWNER);
  });

  it("a next= that leaves the site is ignored", async () => {
    const out = await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD, next: "//evil.example/x" }));
    expect(out.location).toBe("/");
  });

  it("gives a new session id at sign-in and invalidates the one the browser carried (session fixation)", async () => {
    const planted = fixture.actors.viewer!.sessionId; // a session someone else could know
    setRequest({ cookies: { [SESSION_COOKIE]: planted } });
    expect((await getActor())?.userId).toBe("u_viewer");
    await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD }));
    const fresh = sessionCookie()!.value;
    expect(fresh).not.toBe(planted);
    expect(
      db()
        .select()
        .from(sessions)
        .where(eq(sessions.id, secretHash(planted)))
        .get(),
    ).toBeUndefined();
    // an arbitrary id chosen by the client is never adopted either
    setRequest({ cookies: { [SESSION_COOKIE]: "chosen-by-attacker" } });
    await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD }));
    expect(sessionCookie()!.value).not.toBe("chosen-by-attacker");
    expect(
      db()
        .select()
        .from(sessions)
        .where(eq(sessions.id, secretHash("chosen-by-attacker")))
        .get(),
    ).toBeUndefined();
  });

  it("sign-out ends the session and clears the cookie", async () => {
    const { sessionId } = fixture.actors.owner!;
    setRequest({ cookies: { [SESSION_COOKIE]: sessionId } });
    expect(await runAction(signOut, form({}))).toMatchObject({ status: 303, location: "/" });
    expect(sessionCookie()!.value).toBe("");
    expect(
      db()
        .select()
        .from(sessions)
        .where(eq(sessions.id, secretHash(sessionId)))
        .get(),
    ).toBeUndefined();
    const req = new Request(`${SITE}/api/me`, { headers: { cookie: `${SESSION_COOKIE}=${sessionId}` } });
    expect((await getMe(req)).status).toBe(401);
  });

  it("are stored hashed: the database never holds an id a cookie could carry", async () => {
    await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD }));
    const id = sessionCookie()!.value;
    const rows = db().select().from(sessions).all();
    expect(rows.some((r) => r.id === id)).toBe(false);
    expect(rows.some((r) => r.id === secretHash(id))).toBe(true);
    // a stored value used as a cookie signs no one in
    const stored = rows.find((r) => r.userId === fixture.actors.viewer!.userId)!.id;
    const req = new Request(`${SITE}/api/me`, { headers: { cookie: `${SESSION_COOKIE}=${stored}` } });
    expect((await getMe(req)).status).toBe(401);
  });

  it("sign out everywhere ends every session of the person, and only theirs", async () => {
    setRequest({ address: "198.51.100.8" });
    await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD }));
    const other = sessionCookie()!.value; // a second browser
    const { sessionId } = fixture.actors.owner!;
    setRequest({ cookies: { [SESSION_COOKIE]: sessionId } });
    expect(await runAction(signOutEverywhere, form({}))).toMatchObject({ status: 303, location: "/signin" });
    expect(sessionCookie()!.value).toBe("");
    for (const id of [sessionId, other]) {
      const req = new Request(`${SITE}/api/me`, { headers: { cookie: `${SESSION_COOKIE}=${id}` } });
      expect((await getMe(req)).status).toBe(401);
    }
    const viewer = new Request(`${SITE}/api/me`, { headers: { cookie: fixture.actors.viewer!.cookie } });
    expect((await getMe(viewer)).status).toBe(200);
  });

  it("an expired session is refused", async () => {
    const { sessionId } = fixture.actors.owner!;
    db()
      .update(sessions)
      .set({ expiresAt: Math.floor(Date.now() / 1000) - 1 })
      .where(eq(sessions.id, secretHash(sessionId)))
      .run();
    const req = new Request(`${SITE}/api/me`, { headers: { cookie: `${SESSION_COOKIE}=${sessionId}` } });
    expect((await getMe(req)).status).toBe(401);
  });

  it("a wrong password and an unknown address get the same answer", async () => {
    const wrong = await runAction(signIn, form({ email: OWNER, password: "not the password" }));
    const unknown = await runAction(signIn, form({ email: "nobody@nowhere.example", password: "not the password" }));
    expect(wrong.status).toBe(401);
    expect(unknown.state?.error).toBe(wrong.state?.error);
    expect(wrong.state?.values).toEqual({ email: OWNER });
  });
});

describe("sign-in rate limits", () => {
  it(`locks an account for one address after ${PAIR_FAILURES} failures there, and says when to try again`, async () => {
    const t0 = new Date("2026-12-01T14:00:00Z");
    for (let i = 0; i < PAIR_FAILURES; i++) {
      const r = await checkSignIn(OWNER, "wrong password", "203.0.113.7", new Date(t0.getTime() + i * 1000));
      expect(r).toMatchObject({ ok: false, status: 401 });
    }
    // even the right password is refused from that address while locked
    const locked = await checkSignIn(OWNER, DEMO_PASSWORD, "203.0.113.7", new Date(t0.getTime() + 60_000));
    expect(locked).toEqual({
      ok: false,
      status: 429,
      message:
        "Too many failed sign-ins for this account from your network address. Try again in 14 minutes (after 14:15 UTC).",
    });
    // another account from that address is not affected
    expect(
      await checkSignIn("designer@larkspur.example", DEMO_PASSWORD, "203.0.113.7", new Date(t0.getTime() + 60_000)),
    ).toMatchObject({ ok: true });
    // when the first failure leaves the window, the pair opens again
    const later = new Date(t0.getTime() + SIGN_IN_WINDOW_MS + 1);
    expect(await checkSignIn(OWNER, DEMO_PASSWORD, "203.0.113.7", later)).toMatchObject({ ok: true });
  });

  it("the owner still signs in from their own address while someone guesses from another", async () => {
    const t0 = new Date("2026-12-01T15:00:00Z");
    const at = (s: number) => new Date(t0.getTime() + s * 1000);
    // the owner signed in from home last week
    expect(
      await checkSignIn(OWNER, DEMO_PASSWORD, "198.51.100.20", new Date(t0.getTime() - 7 * 86400_000)),
    ).toMatchObject({ ok: true });
    // an attacker guesses from one address until locked, then from many (as a botnet would)
    for (let i = 0; i < PAIR_FAILURES + 3; i++) await checkSignIn(OWNER, `guess ${i}`, "203.0.113.66", at(i));
    expect(await checkSignIn(OWNER, "guess", "203.0.113.66", at(20))).toMatchObject({ status: 429 });
    for (let i = 0; i < ACCOUNT_FAILURES + 5; i++)
      await checkSignIn(OWNER, `guess ${i}`, `192.0.2.${i % 250}`, at(30 + i));
    // guesses from yet another new address are held back now ...
    const spread = await checkSignIn(OWNER, DEMO_PASSWORD, "233.252.0.9", at(200));
    expect(spread).toMatchObject({ ok: false, status: 429 });
    expect(spread.ok ? "" : spread.message).toMatch(/^Too many failed sign-ins for this account from new network/);
    // ... but the owner, at home, signs in
    expect(await checkSignIn(OWNER, DEMO_PASSWORD, "198.51.100.20", at(201))).toMatchObject({ ok: true });
  });

  it("a successful sign-in resets the pair's count", async () => {
    const t0 = new Date("2026-12-01T09:00:00Z");
    const at = (s: number) => new Date(t0.getTime() + s * 1000);
    for (let i = 0; i < PAIR_FAILURES - 1; i++) await checkSignIn(OWNER, "wrong", "198.51.100.1", at(i));
    expect(await checkSignIn(OWNER, DEMO_PASSWORD, "198.51.100.1", at(10))).toMatchObject({ ok: true });
    expect(await checkSignIn(OWNER, "wrong", "198.51.100.1", at(11))).toMatchObject({ status: 401 });
  });

  it(`locks an address after ${ADDRESS_FAILURES} failures over any accounts`, async () => {
    const t0 = new Date("2026-12-01T10:00:00Z");
    for (let i = 0; i < ADDRESS_FAILURES; i++) {
      await checkSignIn(`guess${i}@larkspur.example`, "wrong", "203.0.113.99", new Date(t0.getTime() + i * 1000));
    }
    const r = await checkSignIn(
      "designer@larkspur.example",
      DEMO_PASSWORD,
      "203.0.113.99",
      new Date(t0.getTime() + 30_000),
    );
    expect(r).toMatchObject({ ok: false, status: 429 });
    expect(r.ok ? "" : r.message).toMatch(
      /^Too many failed sign-ins from your network address\. Try again in 15 minutes \(after 10:15 UTC\)\.$/,
    );
    expect(
      await checkSignIn("designer@larkspur.example", DEMO_PASSWORD, "203.0.113.100", new Date(t0.getTime() + 30_000)),
    ).toMatchObject({ ok: true });
  });

  it("a rotating X-Forwarded-For does not give more guesses (no trusted proxy configured)", async () => {
    // Runnel's server (scripts/lib/next-server.ts) puts the connection's peer address in its own header.
    const from = (xff: string) =>
      setRequest({ address: xff }) ?? requestContext.headers.set(SOCKET_ADDRESS_HEADER, "203.0.113.45");
    for (let i = 0; i < ADDRESS_FAILURES; i++) {
      from(`10.9.${i}.1`);
      const out = await runAction(signIn, form({ email: `guess${i}@larkspur.example`, password: "wrong" }));
      expect(out.status).toBe(401);
    }
    from("10.9.200.1");
    const out = await runAction(signIn, form({ email: "designer@larkspur.example", password: DEMO_PASSWORD }));
    expect(out.status).toBe(429);
    expect(out.state?.error).toMatch(/from your network address/);
  });

  it("X-Forwarded-For counts only through the configured number of trusted proxies", () => {
    const h = (xff: string) => new Headers({ "x-forwarded-for": xff, [SOCKET_ADDRESS_HEADER]: "10.0.0.2" });
    const saved = process.env.RUNNEL_TRUSTED_PROXIES;
    try {
      delete process.env.RUNNEL_TRUSTED_PROXIES;
      expect(clientAddress(h("1.2.3.4"))).toBe("10.0.0.2");
      process.env.RUNNEL_TRUSTED_PROXIES = "1";
      // one proxy (10.0.0.2) appended the address it saw; what the client wrote before it is ignored
      expect(clientAddress(h("6.6.6.6, 198.51.100.4"))).toBe("198.51.100.4");
      process.env.RUNNEL_TRUSTED_PROXIES = "2";
      expect(clientAddress(h("6.6.6.6, 198.51.100.4, 10.0.0.1"))).toBe("198.51.100.4");
      process.env.RUNNEL_TRUSTED_PROXIES = "junk";
      expect(clientAddress(h("1.2.3.4"))).toBe("10.0.0.2");
    } finally {
      if (saved === undefined) delete process.env.RUNNEL_TRUSTED_PROXIES;
      else process.env.RUNNEL_TRUSTED_PROXIES = saved;
    }
  });

  it("the sign-in form shows the lock message", async () => {
    for (let i = 0; i < PAIR_FAILURES; i++) await runAction(signIn, form({ email: OWNER, password: "wrong" }));
    const out = await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD }));
    expect(out.status).toBe(429);
    expect(out.state?.error).toMatch(
      /^Too many failed sign-ins for this account from your network address\. Try again in 15 minutes \(after \d\d:\d\d UTC\)\.$/,
    );
  });
});

describe("sign-up", () => {
  it("answers the same whether or not the address has an account; the holder is told by e-mail", async () => {
    const { startMailSink } = await import("@/scripts/lib/mail-sink");
    const inbox: { recipients: string[]; subject: string }[] = [];
    const sink = await startMailSink({ onMessage: (m) => void inbox.push(m) });
    process.env.RUNNEL_MAIL_SINK_PORT = String(sink.port);
    try {
      const pw = "a long phrase of words 9";
      const fresh = await runAction(
        signUp,
        form({ name: "Lee Fresh", email: "lee@elsewhere.example", password: pw, confirm: pw }),
      );
      setRequest();
      const taken = await runAction(signUp, form({ name: "Mallory", email: OWNER, password: pw, confirm: pw }));
      expect(taken).toEqual({ ...fresh, state: { ...fresh.state, values: { ...fresh.state!.values, email: OWNER } } });
      expect(fresh.state?.message).toBe(SIGN_UP_DONE);
      expect(requestContext.setCookies).toEqual([]); // no session either way
      // the existing account is untouched; the holder hears of the attempt
      expect(
        await verifyPassword(
          db().select().from(users).where(eq(users.email, OWNER)).get()!.passwordHash,
          DEMO_PASSWORD,
        ),
      ).toBe(true);
      expect(inbox.map((m) => [m.recipients[0], m.subject])).toEqual([
        ["lee@elsewhere.example", "Your Runnel account"],
        [OWNER, "Someone tried to create a Runnel account with your address"],
      ]);
    } finally {
      delete process.env.RUNNEL_MAIL_SINK_PORT;
      await sink.close();
    }
  });

  it("refuses common and guessable passwords and says why", async () => {
    const cases: [string, RegExp][] = [
      ["password12", /commonly used password/],
      ["1234567890", /hundred most used passwords/],
      ["aaaaaaaaaaaa", /repeats a character/],
      ["qwertyuiop", /too easy to guess/],
    ];
    for (const [pw, why] of cases) {
      const out = await runAction(
        signUp,
        form({ name: "Lee Fresh", email: "lee.fresh@elsewhere.example", password: pw, confirm: pw }),
      );
      expect(out.status, pw).toBe(400);
      expect(out.state?.fieldErrors?.password?.[0], pw).toMatch(/^too easy to guess: /);
      expect(out.state?.fieldErrors?.password?.[0], pw).toMatch(why);
    }
    expect(db().select().from(users).where(eq(users.email, "lee.fresh@elsewhere.example")).get()).toBeUndefined();
  });

  it(`allows ${SIGN_UPS_PER_ADDRESS} sign-ups per address an hour`, async () => {
    const pw = "a long phrase of words 9";
    for (let i = 0; i < SIGN_UPS_PER_ADDRESS; i++) {
      setRequest({ address: "203.0.113.5" });
      const out = await runAction(
        signUp,
        form({ name: "N", email: `n${i}@elsewhere.example`, password: pw, confirm: pw }),
      );
      expect(out.status).toBe(200);
    }
    setRequest({ address: "203.0.113.5" });
    const out = await runAction(signUp, form({ name: "N", email: "n99@elsewhere.example", password: pw, confirm: pw }));
    expect(out.status).toBe(429);
    expect(out.state?.error).toMatch(/^Too many sign-ups from your network address\. Try again in 60 minutes/);
    setRequest({ address: "203.0.113.6" });
    expect(
      (await runAction(signUp, form({ name: "N", email: "n99@elsewhere.example", password: pw, confirm: pw }))).status,
    ).toBe(200);
  });
});

describe("API tokens", () => {
  const me = (authorization: string, cookie?: string) =>
    getMe(new Request(`${SITE}/api/me`, { headers: { authorization, ...(cookie ? { cookie } : {}) } }));

  it("are made on the settings page, shown once, stored hashed, and act as their owner", async () => {
    setRequest({ cookies: { [SESSION_COOKIE]: fixture.actors.reviewer!.sessionId } });
    const made = await runAction(createToken, form({ name: "sweep script" }));
    expect(made.status).toBe(201);
    const token = made.state!.secret!;
    expect(token).toMatch(/^runnel_[A-Za-z0-9_-]{43}$/);
    const stored = db().select().from(apiTokens).where(eq(apiTokens.name, "sweep script")).get()!;
    expect(JSON.stringify(stored)).not.toContain(token.slice(5));
    const res = await me(`Bearer ${token}`);
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({
      user: { id: "u_reviewer" },
      via: "token",
      workspaces: [{ slug: "lm64-edge-row", role: "reviewer" }],
    });
    expect(db().select().from(apiTokens).where(eq(apiTokens.id, stored.id)).get()!.lastUsedAt).not.toBeNull();
  });

  it("a revoked token is refused", async () => {
    const { token, tokenId, sessionId } = fixture.actors.designer!;
    expect((await me(`Bearer ${token}`)).status).toBe(200);
    setRequest({ cookies: { [SESSION_COOKIE]: sessionId } });
    expect((await runAction(revokeToken, form({ tokenId }))).status).toBe(200);
    expect((await me(`Bearer ${token}`)).status).toBe(401);
    // revoking twice, or someone else's token, is a 404
    expect((await runAction(revokeToken, form({ tokenId }))).status).toBe(404);
    expect((await runAction(revokeToken, form({ tokenId: fixture.actors.owner!.tokenId }))).status).toBe(404);
    expect((await me(`Bearer ${fixture.actors.owner!.token}`)).status).toBe(200);
  });

  it("with an Authorization header only the token counts, and a bad one is 401", async () => {
    const cookie = fixture.actors.owner!.cookie;
    expect((await me("Bearer runnel_unknown_token_value", cookie)).status).toBe(401);
    expect((await me("Basic b3duZXI6cGFzcw==", cookie)).status).toBe(401);
    expect((await me("Bearer", cookie)).status).toBe(401);
    expect((await getMe(new Request(`${SITE}/api/me`, { headers: { cookie } }))).status).toBe(200);
  });

  it("names are required", async () => {
    setRequest({ cookies: { [SESSION_COOKIE]: fixture.actors.owner!.sessionId } });
    const out = await runAction(createToken, form({ name: "  " }));
    expect(out).toMatchObject({ status: 400, state: { fieldErrors: { name: ["give the token a name"] } } });
  });
});

describe("the Origin check", () => {
  const post = (headers: Record<string, string>) =>
    postWorkspace(
      new Request(`${SITE}/api/workspaces`, {
        method: "POST",
        headers: { "content-type": "application/json", ...headers },
        body: JSON.stringify({ name: "Divider C" }),
      }),
    );
  const host = new URL(SITE).host;
  const cookie = () => fixture.actors.designer!.cookie;

  it("refuses a mutating request with the cookie from another origin, or with no Origin", async () => {
    expect((await post({ cookie: cookie(), host, origin: "http://evil.example" })).status).toBe(403);
    expect((await post({ cookie: cookie(), host, origin: "null" })).status).toBe(403);
    expect((await post({ cookie: cookie(), host })).status).toBe(403);
    const res = await post({ cookie: cookie(), host, origin: `http://${host}.evil.example` });
    expect(res.status).toBe(403);
    expect((await res.json()).error).toMatch(/Origin does not match Host/);
  });

  it("accepts our own origin (also behind a proxy that sets X-Forwarded-Host) and bearer tokens", async () => {
    expect((await post({ cookie: cookie(), host, origin: SITE })).status).toBe(201);
    expect(
      (
        await post({
          cookie: cookie(),
          host: "10.0.0.5:3000",
          "x-forwarded-host": "runnel.lab.example",
          origin: "https://runnel.lab.example",
        })
      ).status,
    ).toBe(201);
    expect((await post({ authorization: `Bearer ${fixture.actors.designer!.token}` })).status).toBe(201);
  });

  it("leaves safe methods alone", () => {
    expect(originAllowed("GET", new Headers({ origin: "http://evil.example" }))).toBe(true);
    expect(originAllowed("DELETE", new Headers({ origin: "http://evil.example", host }))).toBe(false);
  });

  it("applies to server actions too", async () => {
    setRequest({ cookies: { [SESSION_COOKIE]: fixture.actors.owner!.sessionId }, origin: "http://evil.example" });
    expect((await runAction(createToken, form({ name: "x" }))).status).toBe(403);
    setRequest({ origin: null });
    expect((await runAction(signIn, form({ email: OWNER, password: DEMO_PASSWORD }))).status).toBe(403);
  });
});
