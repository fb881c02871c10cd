import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { sql } from "drizzle-orm";
import { afterEach, describe, expect, it } from "vitest";
import { DatabaseSetupError, openDatabase, PAGE_SIZE } from "@/db";
import { seedDemo, DEMO_USERS } from "@/scripts/seed/index";
import { memberships } from "@/db/schema";
import { freshDatabase } from "../helpers/db";

const cleanups: (() => void)[] = [];
afterEach(() => cleanups.splice(0).forEach((f) => f()));

function fresh() {
  const t = freshDatabase();
  cleanups.push(t.dispose);
  return t;
}

describe("database", () => {
  it("is migrated with WAL, foreign keys and a busy timeout", () => {
    const { db } = fresh();
    expect(db.$client.pragma("journal_mode", { simple: true })).toBe("wal");
    expect(db.$client.pragma("foreign_keys", { simple: true })).toBe(1);
    expect(db.$client.pragma("busy_timeout", { simple: true })).toBe(5000);
    const tables = db
      .all<{ name: string }>(sql`select name from sqlite_master where type = 'table'`)
      .map((r) => r.name);
    expect(tables).toEqual(expect.arrayContaining(["users", "workspaces", "memberships", "__drizzle_migrations"]));
  });

  it("creates a new file with 16 kB pages and leaves an existing file's page size alone", () => {
    const { db } = fresh();
    expect(db.$client.pragma("page_size", { simple: true })).toBe(PAGE_SIZE);
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-pages-"));
    cleanups.push(() => fs.rmSync(dir, { recursive: true, force: true }));
    const file = path.join(dir, "old.db");
    const Database = db.$client.constructor as new (f: string) => import("better-sqlite3").Database;
    const old = new Database(file);
    old.pragma("page_size = 4096");
    old.exec("create table t (x)");
    old.close();
    const reopened = openDatabase(file);
    expect(reopened.$client.pragma("page_size", { simple: true })).toBe(4096);
    expect(reopened.$client.pragma("journal_mode", { simple: true })).toBe("wal");
    reopened.$client.close();
  });

  it("seeds the demo scenario idempotently", () => {
    const { db } = fresh();
    const first = seedDemo(db);
    const dump = () => JSON.stringify(db.select().from(memberships).all());
    const before = dump();
    const second = seedDemo(db);
    expect(second).toEqual(first);
    expect(first.users).toBe(DEMO_USERS.length);
    expect(dump()).toBe(before);
    const roles = new Set(
      db
        .select()
        .from(memberships)
        .all()
        .map((m) => m.role),
    );
    expect([...roles].sort()).toEqual(["designer", "owner", "reviewer", "viewer"]);
  });

  it("refuses a membership for a user that does not exist (foreign keys)", () => {
    const { db } = fresh();
    seedDemo(db);
    expect(() =>
      db.insert(memberships).values({ workspaceId: "ws_lm64", userId: "nobody", role: "viewer" }).run(),
    ).toThrow(/FOREIGN KEY/);
  });

  it("names the path when the database folder cannot be made", () => {
    const file = path.join(os.tmpdir(), `runnel-file-${process.pid}`);
    fs.writeFileSync(file, "not a folder");
    cleanups.push(() => fs.rmSync(file, { force: true }));
    expect(() => openDatabase(path.join(file, "runnel.db"))).toThrow(DatabaseSetupError);
    expect(() => openDatabase(path.join(file, "runnel.db"))).toThrow(
      /runnel-file-\d+\/runnel\.db is not usable: a parent is a file/,
    );
  });

  it("reports a failed migration in one line, naming the file", () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-badmig-"));
    cleanups.push(() => fs.rmSync(dir, { recursive: true, force: true }));
    fs.cpSync("migrations", path.join(dir, "migrations"), { recursive: true });
    const first = fs.readdirSync(path.join(dir, "migrations")).find((f) => f.endsWith(".sql"))!;
    fs.writeFileSync(path.join(dir, "migrations", first), "create table broken (;");
    process.env.RUNNEL_MIGRATIONS = path.join(dir, "migrations");
    try {
      let message = "";
      try {
        openDatabase(path.join(dir, "runnel.db"));
      } catch (e) {
        message = (e as Error).message;
      }
      expect(message).toMatch(/^migration failed for .*runnel\.db/);
      expect(message).not.toContain("\n");
    } finally {
      delete process.env.RUNNEL_MIGRATIONS;
    }
  });
});
