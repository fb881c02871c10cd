/**
 * A run's layout as stored (db/work-schema.ts `run_layouts`): two JSON texts,
 * the head (everything but the four name lists, plus their lengths: a few
 * hundred bytes) and the names (`{ nodes, nodeIsRail, devices, deviceTypes }`:
 * tens of megabytes for a 2,000,000-device network).
 *
 * Why two: parsing a large network's names takes seconds of the request
 * thread. Status polls, the series view, the binary point view, run lists and
 * sign-off summaries need only the head; the names are parsed only where names
 * are shown or exported, and `?view=layout` joins the two texts without parsing.
 */
import { eq, inArray } from "drizzle-orm";
import { runLayouts } from "@/db/schema";
import { db, type Q } from "@/db";
import type { RunLayout } from "./results";

export type LayoutNameLists = Pick<RunLayout, "nodes" | "nodeIsRail" | "devices" | "deviceTypes">;
/** The layout without its name lists, with their lengths. */
export type LayoutHead = Omit<RunLayout, keyof LayoutNameLists> & { nodeCount: number; deviceCount: number };
/** A whole layout, read back: the head's members and the names. */
export type FullLayout = RunLayout & LayoutHead;
export interface StoredLayout {
  head: string;
  names: string;
}

/** The two texts a layout is stored as. */
export function storedLayout(layout: RunLayout): StoredLayout {
  const { nodes, nodeIsRail, devices, deviceTypes, ...rest } = layout;
  return {
    head: JSON.stringify({ ...rest, nodeCount: nodes.length, deviceCount: devices.length }),
    names: JSON.stringify({ nodes, nodeIsRail, devices, deviceTypes }),
  };
}

/** Stores a run's layout unless it has one (a layout never changes). */
export function writeLayout(runId: string, s: StoredLayout, d: Q = db()): void {
  d.insert(runLayouts)
    .values({ runId, ...s })
    .onConflictDoNothing()
    .run();
}

export function hasLayout(runId: string, d: Q = db()): boolean {
  return d.select({ id: runLayouts.runId }).from(runLayouts).where(eq(runLayouts.runId, runId)).get() !== undefined;
}

function parseHead(text: string): LayoutHead | null {
  try {
    const h = JSON.parse(text) as LayoutHead;
    return Array.isArray(h.probes) && Array.isArray(h.sweeps) ? h : null;
  } catch {
    return null;
  }
}

/** A run's layout head; null before the run started. Reads a few hundred bytes. */
export function layoutHead(runId: string, d: Q = db()): LayoutHead | null {
  const r = d.select({ head: runLayouts.head }).from(runLayouts).where(eq(runLayouts.runId, runId)).get();
  return r ? parseHead(r.head) : null;
}

/** The layout heads of several runs (those that have one). */
export function layoutHeads(runIds: readonly string[], d: Q = db()): Map<string, LayoutHead> {
  const out = new Map<string, LayoutHead>();
  if (runIds.length === 0) return out;
  const rows = d
    .select({ runId: runLayouts.runId, head: runLayouts.head })
    .from(runLayouts)
    .where(inArray(runLayouts.runId, [...runIds]))
    .all();
  for (const r of rows) {
    const h = parseHead(r.head);
    if (h) out.set(r.runId, h);
  }
  return out;
}

/** A run's stored layout texts; null before the run started. */
export function layoutTexts(runId: string, d: Q = db()): StoredLayout | null {
  return (
    d
      .select({ head: runLayouts.head, names: runLayouts.names })
      .from(runLayouts)
      .where(eq(runLayouts.runId, runId))
      .get() ?? null
  );
}

/** The whole layout from its texts (parses the names: seconds for a very large network). */
export function parseStoredLayout(s: StoredLayout): FullLayout | null {
  const head = parseHead(s.head);
  if (!head) return null;
  try {
    const names = JSON.parse(s.names) as LayoutNameLists;
    return Array.isArray(names.nodes) && Array.isArray(names.devices) ? { ...head, ...names } : null;
  } catch {
    return null;
  }
}

/** The whole layout as one JSON object text, joined from the two without parsing them. */
export function joinedLayoutJson(s: StoredLayout): string {
  return `${s.head.slice(0, -1)},${s.names.slice(1)}`;
}
