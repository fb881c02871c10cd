/**
 * Account tables: lucia sessions, invitations to a workspace, personal API
 * tokens, sign-in attempts (rate limiting) and the development mailbox.
 *
 * Invariants
 * - Secrets are never stored in clear: an invitation or API token is kept as
 *   the SHA-256 hex of its random value (`token_hash`); passwords live in
 *   users.password_hash as argon2id PHC strings.
 * - `sessions` has exactly the shape @lucia-auth/adapter-drizzle expects:
 *   `expires_at` is in SECONDS since the epoch (the adapter writes it). Its
 *   `id` is the SHA-256 hex of the session id the cookie carries (app/lib/auth.ts
 *   hashes it on the way in), so a copy of the database signs no one in.
 * - An invitation is usable while `accepted_at` and `revoked_at` are null and
 *   `expires_at` is in the future; accepting sets `accepted_at` once.
 * - An API token is valid while `revoked_at` is null.
 */
import { index, integer, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import { createdAt, nowMs, timestamp, users, type Role, workspaceRef } from "./base-schema";

export const sessions = sqliteTable(
  "sessions",
  {
    id: text("id").primaryKey(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    expiresAt: integer("expires_at").notNull(),
  },
  // "sign this user out everywhere" (lucia.invalidateUserSessions)
  (t) => [index("sessions_user_idx").on(t.userId)],
);

export const invitations = sqliteTable(
  "invitations",
  {
    id: text("id").primaryKey(),
    workspaceId: workspaceRef(),
    /** Normalised (trimmed, lower-case) address the invitation was sent to. */
    email: text("email").notNull(),
    role: text("role").$type<Role>().notNull(),
    tokenHash: text("token_hash").notNull(),
    invitedBy: text("invited_by").references(() => users.id, { onDelete: "set null" }),
    expiresAt: timestamp("expires_at").notNull(),
    acceptedAt: timestamp("accepted_at"),
    acceptedBy: text("accepted_by").references(() => users.id, { onDelete: "set null" }),
    revokedAt: timestamp("revoked_at"),
    createdAt: createdAt(),
  },
  (t) => [
    // the link's lookup
    uniqueIndex("invitations_token_idx").on(t.tokenHash),
    // the pending invitations of a workspace (members page)
    index("invitations_workspace_idx").on(t.workspaceId),
  ],
);

export const apiTokens = sqliteTable(
  "api_tokens",
  {
    id: text("id").primaryKey(),
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    name: text("name").notNull(),
    /** The first characters of the token, shown in lists so a person can tell tokens apart. */
    prefix: text("prefix").notNull(),
    tokenHash: text("token_hash").notNull(),
    lastUsedAt: timestamp("last_used_at"),
    revokedAt: timestamp("revoked_at"),
    createdAt: createdAt(),
  },
  (t) => [
    // Authorization: Bearer lookup
    uniqueIndex("api_tokens_hash_idx").on(t.tokenHash),
    // the settings page's list
    index("api_tokens_user_idx").on(t.userId),
  ],
);

export const signInAttempts = sqliteTable(
  "sign_in_attempts",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    /** Normalised address typed into the form (whether or not an account has it). */
    email: text("email").notNull(),
    /** Client address as the server saw it (x-forwarded-for's nearest hop), or "unknown". */
    address: text("address").notNull(),
    succeeded: integer("succeeded", { mode: "boolean" }).notNull(),
    at: timestamp("at").notNull(),
  },
  (t) => [
    // failures of one account in the window
    index("sign_in_attempts_email_idx").on(t.email, t.at),
    // failures from one address in the window
    index("sign_in_attempts_address_idx").on(t.address, t.at),
  ],
);

/** Sign-up attempts per client address (app/lib/rate-limit.ts `takeSignUp`); rows older than the window are deleted. */
export const signUps = sqliteTable(
  "sign_ups",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    address: text("address").notNull(),
    at: integer("at", { mode: "timestamp_ms" }).notNull(),
  },
  // sign-ups from one address in the window
  (t) => [index("sign_ups_address_idx").on(t.address, t.at)],
);

/** Messages received by the local SMTP sink (demo and tests only; empty in production). */
export const devMail = sqliteTable(
  "dev_mail",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    messageId: text("message_id").notNull().default(""),
    from: text("from").notNull(),
    /** Envelope recipients, comma-separated. */
    to: text("to").notNull(),
    subject: text("subject").notNull(),
    text: text("text").notNull(),
    html: text("html"),
    receivedAt: timestamp("received_at").notNull().default(nowMs),
  },
  // newest first on the mailbox page
  (t) => [index("dev_mail_received_idx").on(t.receivedAt)],
);
