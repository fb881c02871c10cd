/**
 * A run's layout stored as two texts (app/lib/run-layouts.ts): the head and the names come back as the layout they
 * were made from, `?view=layout`'s joined text parses to the same object, and migration 0008 splits a layout that
 * an older database kept in `runs.layout` into the same two texts.
 */
import Database from "better-sqlite3";
import fs from "node:fs";
import { describe, expect, it } from "vitest";
import type { RunLayout } from "@/app/lib/results";
import { joinedLayoutJson, parseStoredLayout, storedLayout } from "@/app/lib/run-layouts";

const LAYOUT: RunLayout = {
  network: "divider",
  nodes: ["vdd", "gnd", 'x "quoted"', "y"],
  nodeIsRail: [true, true, false, false],
  devices: ["m1", "m2", "m3"],
  deviceTypes: "npn",
  rails: ["vdd", "gnd"],
  probes: ["ratio"],
  params: ["iin", "temp"],
  sweeps: [{ param: "iin", values: [1e-9, 1e-8], log: true }],
  mismatch: { runs: 10, seed: 7, avt: 3.5e-9 },
};

describe("stored run layouts", () => {
  it("keep the names out of the head and give the whole layout back", () => {
    const s = storedLayout(LAYOUT);
    const head = JSON.parse(s.head) as Record<string, unknown>;
    expect(Object.keys(head).sort()).toEqual(
      ["deviceCount", "mismatch", "network", "nodeCount", "params", "probes", "rails", "sweeps"].sort(),
    );
    expect(head.nodeCount).toBe(4);
    expect(head.deviceCount).toBe(3);
    expect(parseStoredLayout(s)).toEqual({ ...LAYOUT, nodeCount: 4, deviceCount: 3 });
    expect(JSON.parse(joinedLayoutJson(s))).toEqual({ ...LAYOUT, nodeCount: 4, deviceCount: 3 });
  });

  it("a broken text reads as no layout, not a crash", () => {
    expect(parseStoredLayout({ head: "{", names: "{}" })).toBeNull();
    expect(parseStoredLayout({ head: storedLayout(LAYOUT).head, names: "[1," })).toBeNull();
  });

  it("migration 0008 splits an older runs.layout into the same head and names", () => {
    const sql = fs.readFileSync("migrations/0008_run_layouts.sql", "utf8").split("--> statement-breakpoint");
    const copy = sql.find((st) => st.includes("INSERT INTO `run_layouts`"))!;
    const mem = new Database(":memory:");
    mem.exec("CREATE TABLE runs (id text PRIMARY KEY, layout text)");
    mem.exec(sql[0]);
    mem
      .prepare("INSERT INTO runs VALUES (?, ?), (?, NULL), (?, 'not json')")
      .run("r_1", JSON.stringify(LAYOUT), "r_2", "r_3");
    mem.exec(copy);
    const rows = mem.prepare("SELECT run_id, head, names FROM run_layouts").all() as {
      run_id: string;
      head: string;
      names: string;
    }[];
    expect(rows.map((r) => r.run_id)).toEqual(["r_1"]);
    const want = storedLayout(LAYOUT);
    expect(JSON.parse(rows[0].head)).toEqual(JSON.parse(want.head));
    expect(JSON.parse(rows[0].names)).toEqual(JSON.parse(want.names));
    mem.close();
  });
});
