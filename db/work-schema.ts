/**
 * The workbench tables: networks, their commits, runs of a commit, and the
 * stored results of every point of a run.
 *
 * Invariants
 * - A commit is immutable. `id` = SHA-256 hex of (parent id, or "network:" +
 *   network id for a first commit) + "\n" + text, so the same text on two
 *   different parents (or in two networks) makes two distinct commits, and a
 *   commit id names its whole history. `text_sha256` = SHA-256 hex of the text alone.
 * - A run belongs to one commit; `workspace_id` and `network_id` are copies of
 *   the commit's, so the policy check of a run needs no join.
 * - Run states: queued → running → done | failed | canceled | interrupted
 *   (interrupted: the server stopped while the run was running).
 * - `run_points` holds one row per solved point, typed-array columns as
 *   little-endian blobs whose element order is the run's layout (`run_layouts`:
 *   node, device, rail, probe and param names, fixed when the run starts).
 */
import { blob, index, integer, primaryKey, real, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import type { SeekJson } from "../src/solver/design-json";
import type { ExpectationSummary } from "../src/solver/expectation-summary";
import { createdAt, nowMs, timestamp, users, workspaceRef } from "./base-schema";
import { RUN_STATES } from "./run-states";

export { FINAL_RUN_STATES, LIVE_RUN_STATES, RUN_STATES, type RunState } from "./run-states";

/** A validity warning of a run, aggregated over its points. */
export interface RunWarning {
  kind: string;
  message: string;
  /** Points where it occurred. */
  points: number;
  /** First point where it occurred. */
  firstPoint: number;
}

/** A point of a run that could not be solved. */
export interface RunFailure {
  point: number;
  message: string;
}

export const networks = sqliteTable(
  "networks",
  {
    id: text("id").primaryKey(),
    workspaceId: workspaceRef(),
    /** URL name, unique in the workspace: /w/[ws]/n/[slug]. */
    slug: text("slug").notNull(),
    name: text("name").notNull(),
    /** Newest commit, null before the first one. */
    headCommitId: text("head_commit_id"),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    updatedAt: timestamp("updated_at").notNull().default(nowMs),
    /** When an owner or designer archived it: hidden from the workspace's list, its history kept; null while in use. */
    archivedAt: timestamp("archived_at"),
  },
  (t) => [
    // "the network /w/[ws]/n/[slug]" and the workspace's network list
    uniqueIndex("networks_workspace_slug_idx").on(t.workspaceId, t.slug),
  ],
);

export const commits = sqliteTable(
  "commits",
  {
    id: text("id").primaryKey(),
    networkId: text("network_id")
      .notNull()
      .references(() => networks.id, { onDelete: "cascade" }),
    parentId: text("parent_id"),
    text: text("text").notNull(),
    textSha256: text("text_sha256").notNull(),
    message: text("message").notNull(),
    authorId: text("author_id")
      .notNull()
      .references(() => users.id),
    /** Elaborated without errors: only such a commit can be run. */
    ok: integer("ok", { mode: "boolean" }).notNull(),
    errorCount: integer("error_count").notNull(),
    warningCount: integer("warning_count").notNull(),
    /** The diagnostics at commit time, JSON (the diagnostic objects of docs/language.md, The runnel command). */
    diagnostics: text("diagnostics", { mode: "json" }).notNull().$type<CommitDiagnostic[]>(),
    createdAt: createdAt(),
  },
  (t) => [
    // a network's history, newest first
    index("commits_network_created_idx").on(t.networkId, t.createdAt),
  ],
);

export interface CommitDiagnostic {
  severity: "error" | "warning";
  line: number;
  column: number;
  message: string;
}

export const runs = sqliteTable(
  "runs",
  {
    id: text("id").primaryKey(),
    commitId: text("commit_id")
      .notNull()
      .references(() => commits.id, { onDelete: "cascade" }),
    networkId: text("network_id")
      .notNull()
      .references(() => networks.id, { onDelete: "cascade" }),
    workspaceId: workspaceRef(),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    state: text("state", { enum: RUN_STATES }).notNull().default("queued"),
    /** Why a run failed, was canceled or interrupted; null otherwise. */
    reason: text("reason"),
    pointsTotal: integer("points_total").notNull(),
    pointsDone: integer("points_done").notNull().default(0),
    /** Per-run time limit in milliseconds. */
    timeLimitMs: integer("time_limit_ms").notNull(),
    /** Set by the supervisor to ask the worker to stop; the worker then ends the run canceled. */
    cancelRequested: integer("cancel_requested", { mode: "boolean" }).notNull().default(false),
    /** Model settings of the commit (JSON), written with the layout (run_layouts). */
    model: text("model", { mode: "json" }).$type<Record<string, unknown>>(),
    /** Counts over all points, written when the run ends. */
    newtonPoints: integer("newton_points"),
    devicesNotWeak: integer("devices_not_weak"),
    devicesNotSaturated: integer("devices_not_saturated"),
    maxResidual: real("max_residual"),
    /** Solver's reason for its method (same for every point of a run), null before the first point. */
    solverReason: text("solver_reason"),
    /** Validity warnings aggregated over the points (JSON), written when the run ends. */
    warnings: text("warnings", { mode: "json" }).$type<RunWarning[]>(),
    /** Points that could not be solved (JSON, at most 50), written when the run ends. */
    failures: text("failures", { mode: "json" }).$type<RunFailure[]>(),
    /**
     * The network's expectations over the run (src/solver/expectation-summary.ts), written when it ends from
     * run_point_expectations; null when the network states none.
     */
    expectations: text("expectations", { mode: "json" }).$type<ExpectationSummary[]>(),
    /** How many of them fail (null as above): what history and lists show without reading the summaries. */
    expectationsFailing: integer("expectations_failing"),
    createdAt: createdAt(),
    startedAt: timestamp("started_at"),
    finishedAt: timestamp("finished_at"),
  },
  (t) => [
    // the runs of a commit (network page), newest first
    index("runs_commit_created_idx").on(t.commitId, t.createdAt),
    // the supervisor's start-up scan of queued and running runs
    index("runs_state_idx").on(t.state),
  ],
);

/**
 * A run's layout (app/lib/run-layouts.ts), written when the run is queued or by its first chunk, never changed. It
 * has a table of its own: a large network's names are tens of megabytes, and in the runs row every update of a run
 * (points done, state) would rewrite them and every read of a column stored after them would walk their overflow
 * pages (a status poll of a 2,000,000-device run read 40 MB).
 */
export const runLayouts = sqliteTable("run_layouts", {
  runId: text("run_id")
    .primaryKey()
    .references(() => runs.id, { onDelete: "cascade" }),
  /** JSON: the layout without its four name lists, plus `nodeCount` and `deviceCount` (small: what most reads need). */
  head: text("head").notNull(),
  /** JSON: `{ nodes, nodeIsRail, devices, deviceTypes }` (read only where names are shown or exported). */
  names: text("names").notNull(),
});

export const runPoints = sqliteTable(
  "run_points",
  {
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    /** 0-based point index: grid point × mismatch sample, outer sweep slowest, sample fastest. */
    point: integer("point").notNull(),
    /** Mismatch sample 0..N-1, or 0 without mismatch. */
    sample: integer("sample").notNull(),
    // Small columns first: SQLite then reads a curve over all points (params,
    // probes, solver) without touching the overflow pages of the big blobs.
    /** Float64, one per layout.params. */
    params: blob("params", { mode: "buffer" }).notNull(),
    /** Float64, one per layout.probes. */
    probes: blob("probes", { mode: "buffer" }).notNull(),
    method: text("method", { enum: ["linear", "newton"] }).notNull(),
    iterations: integer("iterations").notNull(),
    residual: real("residual").notNull(),
    /** Why the point could not be solved (its arrays are then NaN); null for a solved point. */
    error: text("error"),
    /** Float64, one per layout.rails (current delivered into the network). */
    rails: blob("rails", { mode: "buffer" }).notNull(),
    /** Float64, one per layout.nodes (absolute voltage). */
    nodes: blob("nodes", { mode: "buffer" }).notNull(),
    /** Float64, one per layout.devices (current, the sign conventions of docs/language.md). */
    current: blob("current", { mode: "buffer" }).notNull(),
    /** Float32, one per layout.devices; NaN where the inversion coefficient is unknown. */
    ic: blob("ic", { mode: "buffer" }).notNull(),
    /** Uint8, one per layout.devices: 1 saturated, 0 not. */
    saturated: blob("saturated", { mode: "buffer" }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.point] })],
);

/**
 * Each expectation's verdict and margin at a solved point of a run whose network states any: one row per solved
 * point (none for a point that could not be solved), written with the point. Apart from run_points so that
 * reading every point's verdicts (the run's summary, the margin plots) never walks the big blobs' overflow pages.
 */
export const runPointExpectations = sqliteTable(
  "run_point_expectations",
  {
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    point: integer("point").notNull(),
    /** Uint8, one per layout.expectations: 1 holds, 0 fails. */
    passed: blob("passed", { mode: "buffer" }).notNull(),
    /** Float64, one per layout.expectations: the margin in the expectation's unit (NaN: none). */
    margins: blob("margins", { mode: "buffer" }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.point] })],
);

/** stopped: a stop request (cancel, time limit, another chunk failed) ended the chunk before its last point. */
export const CHUNK_STATES = ["queued", "running", "done", "stopped", "failed"] as const;
export type ChunkState = (typeof CHUNK_STATES)[number];

/**
 * A run's points split into chunks [start, end) solved independently (in the
 * local pool or by queue workers). Planned when the run is queued; a chunk is
 * `done` once every point of its range is stored and its statistics written.
 * The run's figures (warnings, counts, failures) are merged from the chunks'
 * `stats` and `flags` when every chunk is in.
 */
export const runChunks = sqliteTable(
  "run_chunks",
  {
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    chunk: integer("chunk").notNull(),
    /** First point and one past the last point of the chunk, in run order. */
    start: integer("start").notNull(),
    end: integer("end").notNull(),
    /** Fair-queue order (virtual time): lower runs first; the queue's job priority. */
    tag: integer("tag").notNull().default(0),
    state: text("state", { enum: CHUNK_STATES }).notNull().default("queued"),
    /** Times the chunk was handed out (a retry after a lost worker counts again). */
    attempts: integer("attempts").notNull().default(0),
    /** The worker token the chunk is currently handed out under (queue workers); null in the local pool. */
    workerTokenId: text("worker_token_id"),
    /** Chunk statistics (JSON ChunkStats, app/lib/run-stats.ts), written when the chunk is done. */
    stats: text("stats"),
    /** Per-device flags of the chunk (two bit sets: outside weak inversion, not saturated), written with `stats`. */
    flags: blob("flags", { mode: "buffer" }),
    /** Why the chunk failed (its message fails the run). */
    error: text("error"),
    claimedAt: timestamp("claimed_at"),
    finishedAt: timestamp("finished_at"),
  },
  (t) => [primaryKey({ columns: [t.runId, t.chunk] })],
);

/**
 * Tokens that let a worker process (`npm run worker`) take a workspace's run
 * chunks from the queue and post their results. Stored as SHA-256 of the
 * secret; valid while `revoked_at` is null. An operator token (configured
 * setting, not a row) serves every workspace.
 */
export const workerTokens = sqliteTable(
  "worker_tokens",
  {
    id: text("id").primaryKey(),
    workspaceId: workspaceRef(),
    name: text("name").notNull(),
    /** The first characters of the token, shown in lists. */
    prefix: text("prefix").notNull(),
    tokenHash: text("token_hash").notNull(),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    lastUsedAt: timestamp("last_used_at"),
    revokedAt: timestamp("revoked_at"),
    createdAt: createdAt(),
  },
  (t) => [
    // the Authorization: Bearer lookup of a worker
    uniqueIndex("worker_tokens_hash_idx").on(t.tokenHash),
    // a workspace's token list
    index("worker_tokens_workspace_idx").on(t.workspaceId),
  ],
);

/**
 * A goal-seek a member asked for on a finished run's network (POST /api/runs/[id]/seek): what was asked and
 * what Brent's method found, kept with the run so the review sees the same answer. Never changed.
 */
export const runSeeks = sqliteTable(
  "run_seeks",
  {
    id: text("id").primaryKey(),
    runId: text("run_id")
      .notNull()
      .references(() => runs.id, { onDelete: "cascade" }),
    createdBy: text("created_by")
      .notNull()
      .references(() => users.id),
    createdAt: createdAt(),
    /** JSON: `{ param, low, high, probe, target }` in SI units. */
    spec: text("spec", { mode: "json" })
      .notNull()
      .$type<{ param: string; low: number; high: number; probe: string; target: number }>(),
    /** JSON: the searches, one per point of the other sweeps (src/solver/design-json.ts SeekJson). */
    seeks: text("seeks", { mode: "json" }).notNull().$type<SeekJson[]>(),
    /** Why nothing was searched (the network does not elaborate, too many searches…); null when searched. */
    error: text("error"),
  },
  (t) => [index("run_seeks_run_idx").on(t.runId, t.createdAt)],
);
