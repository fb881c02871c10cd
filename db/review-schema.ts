/**
 * Review tables: threads on a commit, their comments, reviewers' verdicts
 * (sign-off or changes asked), the results diff stored per finished run, and
 * bench measurements attached to a network.
 *
 * Invariants
 * - Every row carries `workspace_id` (a copy of its commit's or network's), so
 *   the policy check of a permalink needs no join.
 * - A comment's `body` is the Markdown as written; it is rendered (and
 *   sanitised) when read, never stored as HTML.
 * - `reviews` is append-only: a commit's state per reviewer is that
 *   reviewer's newest row ("withdrawn" counts as no verdict); the commit's
 *   state is "rework" when any reviewer's newest verdict sends it back, else
 *   "signed_off" when at least one signed off, else open.
 * - `notifications` are one person's inbox: each row names its recipient and
 *   workspace, what happened (`kind`) and the place it links to (`href`, a
 *   path of this site); `read_at` is null until the recipient marks it read.
 * - `commit_diffs` has at most one row per run (computed once when the run
 *   finishes); `base_run_id` is null when the parent commit had no finished
 *   run of the same analysis (then `compared` = 0 and the row says so).
 * - `measurements.data` is Float64 little-endian, column-major: x, then each
 *   series in the order of `series`, `rows` values each, in SI units.
 */
import { sql } from "drizzle-orm";
import { blob, index, integer, sqliteTable, text } from "drizzle-orm/sqlite-core";
import { createdAt, nowMs, timestamp, users, workspaceRef } from "./base-schema";
import { commits, networks, runs } from "./work-schema";

/** A reviewer's verdict on a commit: signed off, or sent back for rework. */
export const VERDICTS = ["signed_off", "rework"] as const;
export type Verdict = (typeof VERDICTS)[number];
/** What a `reviews` row records: a verdict, or that the reviewer withdrew their earlier one. */
export const REVIEW_ENTRIES = [...VERDICTS, "withdrawn"] as const;
export type ReviewEntry = (typeof REVIEW_ENTRIES)[number];

export const threads = sqliteTable(
  "threads",
  {
    id: text("id").primaryKey(),
    workspaceId: workspaceRef(),
    networkId: text("network_id")
      .notNull()
      .references(() => networks.id, { onDelete: "cascade" }),
    commitId: text("commit_id")
      .notNull()
      .references(() => commits.id, { onDelete: "cascade" }),
    /** The run the thread is pinned to, if any. */
    runId: text("run_id").references(() => runs.id, { onDelete: "set null" }),
    title: text("title").notNull(),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    /** Time of the newest comment or verdict. */
    updatedAt: timestamp("updated_at").notNull().default(nowMs),
  },
  (t) => [
    // the threads of a commit (history and network page)
    index("threads_commit_idx").on(t.commitId),
    // the threads of a network, newest activity first
    index("threads_network_updated_idx").on(t.networkId, t.updatedAt),
  ],
);

export const comments = sqliteTable(
  "comments",
  {
    id: text("id").primaryKey(),
    threadId: text("thread_id")
      .notNull()
      .references(() => threads.id, { onDelete: "cascade" }),
    workspaceId: workspaceRef(),
    authorId: text("author_id")
      .notNull()
      .references(() => users.id),
    /** Markdown as written (at most 20 000 characters). */
    body: text("body").notNull(),
    /** Handles mentioned whose member was sent an e-mail (JSON string[]), for the record. */
    notified: text("notified", { mode: "json" })
      .notNull()
      .$type<string[]>()
      .default(sql`'[]'`),
    createdAt: createdAt(),
  },
  (t) => [
    // a thread's comments in order
    index("comments_thread_created_idx").on(t.threadId, t.createdAt),
  ],
);

export const reviews = sqliteTable(
  "reviews",
  {
    id: text("id").primaryKey(),
    commitId: text("commit_id")
      .notNull()
      .references(() => commits.id, { onDelete: "cascade" }),
    workspaceId: workspaceRef(),
    reviewerId: text("reviewer_id")
      .notNull()
      .references(() => users.id),
    verdict: text("verdict", { enum: REVIEW_ENTRIES }).notNull(),
    /** The thread (and its comment) where the verdict was given, if any. */
    threadId: text("thread_id").references(() => threads.id, { onDelete: "set null" }),
    commentId: text("comment_id").references(() => comments.id, { onDelete: "set null" }),
    createdAt: createdAt(),
  },
  (t) => [
    // a commit's verdicts, newest last (history badges, thread header)
    index("reviews_commit_created_idx").on(t.commitId, t.createdAt),
  ],
);

export const commitDiffs = sqliteTable(
  "commit_diffs",
  {
    /** The finished run whose results were compared with the parent commit's. */
    runId: text("run_id")
      .primaryKey()
      .references(() => runs.id, { onDelete: "cascade" }),
    commitId: text("commit_id")
      .notNull()
      .references(() => commits.id, { onDelete: "cascade" }),
    workspaceId: workspaceRef(),
    /** The parent commit's newest finished run of the same analysis; null when there is none. */
    baseRunId: text("base_run_id").references(() => runs.id, { onDelete: "set null" }),
    baseCommitId: text("base_commit_id"),
    analysis: text("analysis").notNull(),
    compared: integer("compared").notNull(),
    beyond: integer("beyond").notNull(),
    /** JSON: { names: string[] } (first names that moved), rows (at most 200 beyond rows), name changes, tolerance. */
    summary: text("summary", { mode: "json" }).notNull().$type<StoredDiffSummary>(),
    createdAt: createdAt(),
  },
  (t) => [
    // the stored diffs of a commit (history badges)
    index("commit_diffs_commit_idx").on(t.commitId),
  ],
);

export interface StoredDiffSummary {
  names: string[];
  rows: {
    point: string;
    kind: string;
    quantity: string;
    name: string;
    from: number | null;
    to: number | null;
    rel: number | null;
  }[];
  nameChanges: { kind: string; added: string[]; removed: string[] }[];
  tolerance: { rel: number; absCurrent: number; absVoltage: number; absProbe: number; absIc: number };
  /** Why nothing was compared, when `compared` is 0. */
  note?: string;
}

export const measurements = sqliteTable(
  "measurements",
  {
    id: text("id").primaryKey(),
    workspaceId: workspaceRef(),
    networkId: text("network_id")
      .notNull()
      .references(() => networks.id, { onDelete: "cascade" }),
    /** The commit that was measured (the taped-out revision), if named. */
    commitId: text("commit_id").references(() => commits.id, { onDelete: "set null" }),
    name: text("name").notNull(),
    note: text("note").notNull().default(""),
    /** x axis: name, written unit, dimension (V, A, K or 1). */
    xName: text("x_name").notNull(),
    xUnit: text("x_unit").notNull(),
    xDimension: text("x_dimension").notNull(),
    /** JSON: [{ name, unit, dimension }] in column order after x. */
    series: text("series", { mode: "json" }).notNull().$type<{ name: string; unit: string; dimension: string }[]>(),
    rows: integer("rows").notNull(),
    data: blob("data", { mode: "buffer" }).notNull(),
    /** Size of the uploaded file in bytes. */
    bytes: integer("bytes").notNull(),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
  },
  (t) => [
    // the measurements of a network (network page, run overlay)
    index("measurements_network_idx").on(t.networkId),
  ],
);

export const NOTIFICATION_KINDS = ["mention", "verdict", "reply", "run_done", "run_failed"] as const;
export type NotificationKind = (typeof NOTIFICATION_KINDS)[number];

export const notifications = sqliteTable(
  "notifications",
  {
    id: text("id").primaryKey(),
    /** Whose inbox. */
    userId: text("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    workspaceId: workspaceRef(),
    kind: text("kind", { enum: NOTIFICATION_KINDS }).notNull(),
    /** Who caused it (null for a run that ended). */
    actorId: text("actor_id").references(() => users.id, { onDelete: "set null" }),
    /** One line saying what happened. */
    title: text("title").notNull(),
    /** Where it happened: a path of this site (a thread's comment, a run). */
    href: text("href").notNull(),
    threadId: text("thread_id").references(() => threads.id, { onDelete: "cascade" }),
    runId: text("run_id").references(() => runs.id, { onDelete: "cascade" }),
    createdAt: createdAt(),
    readAt: timestamp("read_at"),
  },
  (t) => [
    // a person's inbox, newest first, and the unread count of the header badge
    index("notifications_user_read_created_idx").on(t.userId, t.readAt, t.createdAt),
  ],
);
