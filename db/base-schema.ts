/**
 * The base of the schema: the timestamp columns every table module uses, and
 * the tables the others refer to (users, workspaces, memberships). Table
 * modules import from here, never from schema.ts, so no module imports
 * another in a circle.
 */
import { sql } from "drizzle-orm";
import { index, integer, primaryKey, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";

/** SQLite's clock in milliseconds since the epoch: the default of every `*_at` column set when a row is made. */
export const nowMs = sql`(cast(unixepoch('subsec') * 1000 as integer))`;

/** A point in time: milliseconds since the epoch in an integer column, a Date in TypeScript. */
export const timestamp = (name: string) => integer(name, { mode: "timestamp_ms" });

/** When the row was made, set by SQLite. */
export const createdAt = () => timestamp("created_at").notNull().default(nowMs);

export const ROLES = ["owner", "designer", "reviewer", "viewer"] as const;
export type Role = (typeof ROLES)[number];

export const users = sqliteTable(
  "users",
  {
    id: text("id").primaryKey(),
    email: text("email").notNull(),
    name: text("name").notNull(),
    /** argon2id PHC string; null for an account that has not set a password yet. */
    passwordHash: text("password_hash"),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("users_email_idx").on(t.email)],
);

export const workspaces = sqliteTable(
  "workspaces",
  {
    id: text("id").primaryKey(),
    /** URL name, unique: /w/[slug]. */
    slug: text("slug").notNull(),
    name: text("name").notNull(),
    description: text("description").notNull().default(""),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex("workspaces_slug_idx").on(t.slug)],
);

/** The workspace a row belongs to (every permalink's policy check reads it without a join); its rows go with it. */
export const workspaceRef = () =>
  text("workspace_id")
    .notNull()
    .references(() => workspaces.id, { onDelete: "cascade" });

export const memberships = sqliteTable(
  "memberships",
  {
    workspaceId: workspaceRef(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    role: text("role", { enum: ROLES }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    primaryKey({ columns: [t.workspaceId, t.userId] }),
    // "which workspaces is this user in" (the workspace list of the shell)
    index("memberships_user_idx").on(t.userId),
  ],
);
