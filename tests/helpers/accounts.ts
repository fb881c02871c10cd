/**
 * An accounts fixture: the seeded demo workspace plus one signed-in session
 * and one API token for each kind of actor, in a template database that each
 * test case copies (so a mutation in one case never leaks into the next).
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { closeDb, db as processDb, openDatabase, type DB } from "@/db";
import { DEMO_PASSWORD, seedDemo } from "@/scripts/seed/index";
import { apiTokens, sessions, users } from "@/db/schema";
import { hashPasswordSync } from "@/app/lib/passwords";
import { secretHash } from "@/app/lib/secrets";
import { afterAll, beforeAll } from "vitest";

export const WHO = ["anonymous", "outsider", "viewer", "reviewer", "designer", "owner"] as const;
export type Who = (typeof WHO)[number];

export interface ActorFixture {
  userId: string;
  email: string;
  /** Cookie header value carrying a valid session. */
  cookie: string;
  sessionId: string;
  token: string;
  tokenId: string;
}

export const WORKSPACE = { id: "ws_lm64", slug: "lm64-edge-row" };

const USER_OF: Record<Exclude<Who, "anonymous">, { id: string; email: string }> = {
  outsider: { id: "u_outsider", email: "outsider@elsewhere.example" },
  viewer: { id: "u_viewer", email: "viewer@larkspur.example" },
  reviewer: { id: "u_reviewer", email: "reviewer@larkspur.example" },
  designer: { id: "u_designer1", email: "designer@larkspur.example" },
  owner: { id: "u_owner", email: "owner@larkspur.example" },
};

export interface AccountsFixture {
  template: string;
  actors: Record<Who, ActorFixture | null>;
  /** A fresh copy of the template as the process-wide database ($RUNNEL_DB, `db()`); returns `db()`. */
  useCopy(): DB;
  dispose(): void;
}

export function buildAccountsFixture(): AccountsFixture {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-accounts-"));
  const template = path.join(dir, "template.db");
  const db = openDatabase(template);
  seedDemo(db);
  db.insert(users)
    .values({
      id: USER_OF.outsider.id,
      email: USER_OF.outsider.email,
      name: "Olle Outside",
      passwordHash: hashPasswordSync(DEMO_PASSWORD),
    })
    .run();
  const actors = { anonymous: null } as Record<Who, ActorFixture | null>;
  for (const who of WHO) {
    if (who === "anonymous") continue;
    const u = USER_OF[who];
    const sessionId = `sess_${who}_${"x".repeat(20)}`;
    db.insert(sessions)
      .values({ id: secretHash(sessionId), userId: u.id, expiresAt: Math.floor(Date.now() / 1000) + 30 * 86400 })
      .run();
    const token = `runnel_${who}_${"t".repeat(40)}`;
    const tokenId = `tok_${who}`;
    db.insert(apiTokens)
      .values({
        id: tokenId,
        userId: u.id,
        name: `${who} script`,
        prefix: token.slice(0, 11),
        tokenHash: secretHash(token),
      })
      .run();
    actors[who] = { userId: u.id, email: u.email, cookie: `runnel_session=${sessionId}`, sessionId, token, tokenId };
  }
  db.$client.pragma("wal_checkpoint(TRUNCATE)");
  db.$client.close();
  let copies = 0;
  return {
    template,
    actors,
    useCopy() {
      closeDb();
      const file = path.join(dir, `case-${++copies}.db`);
      fs.copyFileSync(template, file);
      process.env.RUNNEL_DB = file;
      return processDb();
    },
    dispose() {
      closeDb();
      delete process.env.RUNNEL_DB;
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}

/**
 * For a whole test file: the accounts fixture on a copy of its database, handed to `use` before the tests (with
 * the copy's connection), and removed after them.
 */
export function accountsCopy(use: (fixture: AccountsFixture, db: DB) => void): void {
  let made: AccountsFixture | undefined;
  beforeAll(() => {
    made = buildAccountsFixture();
    use(made, made.useCopy());
  });
  afterAll(() => made?.dispose());
}
