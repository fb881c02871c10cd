/**
 * The first look of a done run's page (app/ui/run/first-look.ts), read from what is stored: a sweep's series
 * (kept for the series request that follows at once), or one point of a network whose names form a grid.
 * Bounded, so a page never waits long for its drawing: runs of at most FIRST_LOOK_POINTS points, and for a map,
 * networks of at most FIRST_LOOK_ELEMENTS nodes and devices (their names are read here). A done run never changes,
 * so its drawing is made once per notation and kept (the last FIRST_LOOK_KEPT). Server only.
 */
import type { Notation } from "./format";
import { cachedSeriesView, countsOf, readPoint, runLayout, runLayoutHead } from "./results";
import type { RunRow } from "./runs";
import { serverPalette } from "./theme-tokens";
import { firstLook, firstLookMap, type FirstLook } from "@/app/ui/run/first-look";
import { indexedGroups } from "./indexed-names";
import { processShared } from "./process-shared";

export const FIRST_LOOK_POINTS = 20_000;
export const FIRST_LOOK_ELEMENTS = 100_000;

const FIRST_LOOK_KEPT = 32;
const kept = processShared("run-first-look", () => new Map<string, FirstLook | null>());

export function runFirstLook(run: RunRow, notation: Notation): FirstLook | null {
  if (run.state !== "done" || run.pointsDone < 1 || run.pointsDone > FIRST_LOOK_POINTS) return null;
  const key = `${run.id}:${notation}`;
  if (kept.has(key)) return kept.get(key)!;
  const look = drawFirstLook(run, notation);
  if (kept.size >= FIRST_LOOK_KEPT) kept.delete(kept.keys().next().value!);
  kept.set(key, look);
  return look;
}

function drawFirstLook(run: RunRow, notation: Notation): FirstLook | null {
  const head = runLayoutHead(run.id);
  if (!head) return null;
  if (head.sweeps.length) return firstLook(cachedSeriesView(run.id, head), notation, serverPalette());
  const counts = countsOf(head);
  if (counts.nodes + counts.devices > FIRST_LOOK_ELEMENTS) return null;
  const layout = runLayout(run.id);
  if (!layout) return null;
  // Names first: most networks have no grid, and their point is not read.
  if (!indexedGroups(layout.nodes).grids.length && !indexedGroups(layout.devices).grids.length) return null;
  const point = readPoint(run.id, 0);
  if (!point) return null;
  return firstLookMap(
    {
      nodes: { names: layout.nodes, voltage: point.nodes },
      devices: { names: layout.devices, current: point.current },
    },
    cachedSeriesView(run.id, head),
    notation,
    serverPalette(),
  );
}
