/**
 * Networks and their commits: the server-side data layer. Functions take
 * already-authorised arguments (routes ask app/lib/policy.ts first) and
 * throw RequestError for input a person can correct.
 *
 * Commit ids (see db/work-schema.ts): id = SHA-256 hex of
 * (parent id, or "network:<network id>" for a first commit) + "\n" + text.
 * A commit must name the network's current head as its parent, so two people
 * committing from the same head cannot silently overwrite each other (409).
 */
import { and, asc, desc, eq, inArray, isNotNull, isNull, sql } from "drizzle-orm";
import { db, type Q } from "@/db";
import { newId, sha256Hex } from "@/db/ids";
import { commits, networks, runs, users, type CommitDiagnostic, type RunState } from "@/db/schema";
import { RequestError } from "./http";
import { checkNetworkText, type TextCheck } from "./text-check";
import { immediate } from "./db-busy";

/** The content address of a commit (module comment). */
export function commitIdOf(networkId: string, parentId: string | null, text: string): string {
  return sha256Hex(`${parentId ?? `network:${networkId}`}\n${text}`);
}

/** URL name from a display name: lower-case words joined by "-", at most 48 characters. */
export function slugify(name: string): string {
  const s = name
    .normalize("NFKD")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "")
    .slice(0, 48)
    .replace(/-+$/, "");
  return s || "network";
}

export interface NetworkSummary {
  id: string;
  workspaceId: string;
  slug: string;
  name: string;
  headCommitId: string | null;
  updatedAt: number;
  head: {
    id: string;
    message: string;
    ok: boolean;
    errorCount: number;
    warningCount: number;
    createdAt: number;
    authorName: string;
  } | null;
  commitCount: number;
  /**
   * The newest run, with its validity counts (null until the run ends): devices that left weak inversion or
   * saturation at some point, and the run's warnings and failed points.
   */
  lastRun: {
    id: string;
    state: RunState;
    createdAt: number;
    devicesNotWeak: number | null;
    devicesNotSaturated: number | null;
    warnings: number;
    failures: number;
  } | null;
}

/** The networks of a workspace, most recently changed first, with their head commit and newest run. */
/** `archived: true` lists the archived networks instead (hidden from the ordinary list, history kept). */
export function listNetworks(workspaceId: string, options: { archived?: boolean } = {}, d: Q = db()): NetworkSummary[] {
  const rows = d
    .select()
    .from(networks)
    .where(
      and(
        eq(networks.workspaceId, workspaceId),
        options.archived ? isNotNull(networks.archivedAt) : isNull(networks.archivedAt),
      ),
    )
    .orderBy(desc(networks.updatedAt), asc(networks.name))
    .all();
  if (rows.length === 0) return [];
  const ids = rows.map((r) => r.id);
  const heads = new Map(
    d
      .select({
        id: commits.id,
        message: commits.message,
        ok: commits.ok,
        errorCount: commits.errorCount,
        warningCount: commits.warningCount,
        createdAt: commits.createdAt,
        authorName: users.name,
      })
      .from(commits)
      .innerJoin(users, eq(users.id, commits.authorId))
      .where(
        inArray(
          commits.id,
          rows.map((r) => r.headCommitId).filter((x): x is string => x !== null),
        ),
      )
      .all()
      .map((c) => [c.id, { ...c, createdAt: c.createdAt.getTime() }]),
  );
  const counts = new Map(
    d
      .select({ networkId: commits.networkId, n: sql<number>`count(*)` })
      .from(commits)
      .where(inArray(commits.networkId, ids))
      .groupBy(commits.networkId)
      .all()
      .map((c) => [c.networkId, c.n]),
  );
  const lastRuns = new Map<string, NetworkSummary["lastRun"]>();
  for (const r of d
    .select({
      id: runs.id,
      networkId: runs.networkId,
      state: runs.state,
      createdAt: runs.createdAt,
      devicesNotWeak: runs.devicesNotWeak,
      devicesNotSaturated: runs.devicesNotSaturated,
      // Counts only: the arrays themselves are not read into JavaScript.
      warnings: sql<number>`coalesce(json_array_length(${runs.warnings}), 0)`,
      failures: sql<number>`coalesce(json_array_length(${runs.failures}), 0)`,
    })
    .from(runs)
    .where(inArray(runs.networkId, ids))
    .orderBy(desc(runs.createdAt))
    .all()) {
    if (!lastRuns.has(r.networkId))
      lastRuns.set(r.networkId, {
        id: r.id,
        state: r.state,
        createdAt: r.createdAt.getTime(),
        devicesNotWeak: r.devicesNotWeak,
        devicesNotSaturated: r.devicesNotSaturated,
        warnings: r.warnings,
        failures: r.failures,
      });
  }
  return rows.map((n) => ({
    id: n.id,
    workspaceId: n.workspaceId,
    slug: n.slug,
    name: n.name,
    headCommitId: n.headCommitId,
    updatedAt: n.updatedAt.getTime(),
    head: n.headCommitId ? (heads.get(n.headCommitId) ?? null) : null,
    commitCount: counts.get(n.id) ?? 0,
    lastRun: lastRuns.get(n.id) ?? null,
  }));
}

export interface NetworkRow {
  id: string;
  workspaceId: string;
  slug: string;
  name: string;
  headCommitId: string | null;
  createdAt: number;
  updatedAt: number;
  /** When it was archived (hidden from the list, history kept), null while in use. */
  archivedAt: number | null;
}

function toNetworkRow(n: typeof networks.$inferSelect): NetworkRow {
  return {
    ...n,
    createdAt: n.createdAt.getTime(),
    updatedAt: n.updatedAt.getTime(),
    archivedAt: n.archivedAt ? n.archivedAt.getTime() : null,
  };
}

export function getNetwork(id: string, d: Q = db()): NetworkRow | null {
  const n = d.select().from(networks).where(eq(networks.id, id)).get();
  return n ? toNetworkRow(n) : null;
}

export function networkBySlug(workspaceId: string, slug: string, d: Q = db()): NetworkRow | null {
  const n = d
    .select()
    .from(networks)
    .where(and(eq(networks.workspaceId, workspaceId), eq(networks.slug, slug)))
    .get();
  return n ? toNetworkRow(n) : null;
}

export const MAX_NAME_LENGTH = 120;
export const MAX_MESSAGE_LENGTH = 2000;

function cleanName(name: string): string {
  const n = name.trim().replace(/\s+/g, " ");
  if (n.length === 0) throw new RequestError(400, "name: must not be empty");
  if (n.length > MAX_NAME_LENGTH) throw new RequestError(400, `name: at most ${MAX_NAME_LENGTH} characters`);
  return n;
}

/** A slug not yet used in the workspace: `base`, `base-2`, `base-3`, … */
function freeSlug(d: Q, workspaceId: string, base: string): string {
  const taken = new Set(
    d
      .select({ slug: networks.slug })
      .from(networks)
      .where(
        and(
          eq(networks.workspaceId, workspaceId),
          sql`(${networks.slug} = ${base} or ${networks.slug} like ${base + "-%"})`,
        ),
      )
      .all()
      .map((r) => r.slug),
  );
  if (!taken.has(base)) return base;
  for (let i = 2; ; i++) if (!taken.has(`${base}-${i}`)) return `${base}-${i}`;
}

/**
 * Creates a network. With `text` (an uploaded file, or a starting text) it
 * also makes the first commit with `message`. The slug comes from the name
 * and stays fixed when the network is renamed (links keep working).
 */
export function createNetwork(
  input: { workspaceId: string; name: string; text?: string; message?: string; authorId: string; check?: TextCheck },
  d: Q = db(),
): { network: NetworkRow; commit: CommitRow | null } {
  const name = cleanName(input.name);
  return immediate(d, (tx) => {
    const id = newId("n");
    const slug = freeSlug(tx, input.workspaceId, slugify(name));
    tx.insert(networks).values({ id, workspaceId: input.workspaceId, slug, name, createdBy: input.authorId }).run();
    let commit: CommitRow | null = null;
    if (input.text !== undefined) {
      commit = insertCommit(tx, {
        networkId: id,
        parentId: null,
        text: input.text,
        message: input.message ?? "First version",
        authorId: input.authorId,
        check: input.check,
      });
    }
    return { network: getNetwork(id, tx)!, commit };
  });
}

export function renameNetwork(id: string, name: string, d: Q = db()): NetworkRow {
  const clean = cleanName(name);
  d.update(networks).set({ name: clean, updatedAt: new Date() }).where(eq(networks.id, id)).run();
  const n = getNetwork(id, d);
  if (!n) throw new RequestError(404, "not found");
  return n;
}

/**
 * Archives a network (`archived` true: hidden from the workspace's list; its commits, runs and threads stay and
 * its pages still open) or brings it back (false). Who may do which is the route's business (policy).
 */
export function setNetworkArchived(id: string, archived: boolean, d: Q = db()): NetworkRow {
  d.update(networks)
    .set({ archivedAt: archived ? new Date() : null })
    .where(eq(networks.id, id))
    .run();
  const n = getNetwork(id, d);
  if (!n) throw new RequestError(404, "not found");
  return n;
}

export interface CommitSummary {
  id: string;
  networkId: string;
  parentId: string | null;
  textSha256: string;
  message: string;
  authorId: string;
  authorName: string;
  ok: boolean;
  errorCount: number;
  warningCount: number;
  createdAt: number;
}

export interface CommitRow extends CommitSummary {
  text: string;
  diagnostics: CommitDiagnostic[];
}

const summaryColumns = {
  id: commits.id,
  networkId: commits.networkId,
  parentId: commits.parentId,
  textSha256: commits.textSha256,
  message: commits.message,
  authorId: commits.authorId,
  authorName: users.name,
  ok: commits.ok,
  errorCount: commits.errorCount,
  warningCount: commits.warningCount,
  createdAt: commits.createdAt,
};

/** A network's commits, newest first (without their texts). */
export function listCommits(networkId: string, d: Q = db()): CommitSummary[] {
  return d
    .select(summaryColumns)
    .from(commits)
    .innerJoin(users, eq(users.id, commits.authorId))
    .where(eq(commits.networkId, networkId))
    .orderBy(desc(commits.createdAt), desc(sql`commits.rowid`))
    .all()
    .map((c) => ({ ...c, createdAt: c.createdAt.getTime() }));
}

export function getCommit(id: string, d: Q = db()): CommitRow | null {
  const c = d
    .select({ ...summaryColumns, text: commits.text, diagnostics: commits.diagnostics })
    .from(commits)
    .innerJoin(users, eq(users.id, commits.authorId))
    .where(eq(commits.id, id))
    .get();
  return c ? { ...c, createdAt: c.createdAt.getTime() } : null;
}

/** What a commit stores. `check` is the text's checks when already made (off the request thread, app/lib/interactive.ts). */
type CommitInput = {
  networkId: string;
  parentId: string | null;
  text: string;
  message: string;
  authorId: string;
  check?: TextCheck;
};

function insertCommit(d: Q, input: CommitInput): CommitRow {
  const message = input.message.trim();
  if (message.length === 0) throw new RequestError(400, "message: say what changed");
  if (message.length > MAX_MESSAGE_LENGTH)
    throw new RequestError(400, `message: at most ${MAX_MESSAGE_LENGTH} characters`);
  const result = input.check ?? checkNetworkText(input.text);
  const diagnostics: CommitDiagnostic[] = result.diagnostics;
  const errorCount = diagnostics.filter((x) => x.severity === "error").length;
  const id = commitIdOf(input.networkId, input.parentId, input.text);
  d.insert(commits)
    .values({
      id,
      networkId: input.networkId,
      parentId: input.parentId,
      text: input.text,
      textSha256: sha256Hex(input.text),
      message,
      authorId: input.authorId,
      ok: result.ok,
      errorCount,
      warningCount: diagnostics.length - errorCount,
      diagnostics,
    })
    .run();
  d.update(networks).set({ headCommitId: id, updatedAt: new Date() }).where(eq(networks.id, input.networkId)).run();
  return getCommit(id, d)!;
}

/**
 * Commits `text` on top of the network's head. `parentId` is the commit the
 * author edited (null for a network without commits); it must be the head
 * (409 otherwise). A text equal to the head's is refused (409, nothing to commit).
 * A text with errors is committed (it can be saved but not run).
 */
export function commitText(input: CommitInput, d: Q = db()): CommitRow {
  return immediate(d, (tx) => {
    const t = tx;
    const n = getNetwork(input.networkId, t);
    if (!n) throw new RequestError(404, "not found");
    if (input.parentId !== n.headCommitId) {
      throw new RequestError(
        409,
        `the network has moved on: its newest commit is ${n.headCommitId?.slice(0, 12) ?? "(none)"}, you edited ${input.parentId?.slice(0, 12) ?? "(none)"}; reload and merge your edits`,
        {
          head: n.headCommitId,
        },
      );
    }
    if (n.headCommitId) {
      const head = t
        .select({ textSha256: commits.textSha256 })
        .from(commits)
        .where(eq(commits.id, n.headCommitId))
        .get();
      if (head?.textSha256 === sha256Hex(input.text))
        throw new RequestError(409, "nothing to commit: the text is the same as the newest commit", {
          head: n.headCommitId,
        });
    }
    return insertCommit(t, input);
  });
}
