import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { DB } from "@/db";
import { seedDemo } from "@/scripts/seed/index";
import {
  commitIdOf,
  commitText,
  createNetwork,
  getCommit,
  listCommits,
  listNetworks,
  renameNetwork,
  slugify,
} from "@/app/lib/networks";
import { sha256Hex } from "@/db/ids";
import { RequestError } from "@/app/lib/http";
import { freshDatabase } from "../helpers/db";

// One seeded database for the file (the demo seed solves its runs, so it is not free); every test makes its own networks.
let shared: { db: DB; dispose(): void };
beforeAll(() => {
  shared = freshDatabase();
  seedDemo(shared.db);
});
afterAll(() => shared.dispose());
const fresh = () => shared.db;

const DIVIDER = `network divider
rail vdd = 1
rail gnd = 0
inject bias from=vdd to=a value=10n
nfet m1 gate=vdd source=gnd drain=a
`;

function errorOf(f: () => unknown): RequestError {
  try {
    f();
  } catch (e) {
    if (e instanceof RequestError) return e;
    throw e;
  }
  throw new Error("expected a RequestError");
}

describe("networks and commits", () => {
  it("makes URL names from display names", () => {
    expect(slugify("LM-64 Edge row (v2)")).toBe("lm-64-edge-row-v2");
    expect(slugify("µ!!")).toBe("network");
  });

  it("creates a network with a first commit, content-addressed", () => {
    const db = fresh();
    const { network, commit } = createNetwork(
      {
        workspaceId: "ws_lm64",
        name: "Test divider",
        text: DIVIDER,
        message: "Upload divider.runnel",
        authorId: "u_designer1",
      },
      db,
    );
    expect(network.slug).toBe("test-divider");
    expect(commit!.id).toBe(commitIdOf(network.id, null, DIVIDER));
    expect(commit!.id).toBe(sha256Hex(`network:${network.id}\n${DIVIDER}`));
    expect(commit!.textSha256).toBe(sha256Hex(DIVIDER));
    expect(commit!.ok).toBe(true);
    expect(network.headCommitId).toBe(commit!.id);
    const second = createNetwork(
      { workspaceId: "ws_lm64", name: "Test divider", text: DIVIDER, authorId: "u_designer1" },
      db,
    );
    expect(second.network.slug).toBe("test-divider-2");
    // same text, different network: a different commit, the same text hash
    expect(second.commit!.id).not.toBe(commit!.id);
    expect(second.commit!.textSha256).toBe(commit!.textSha256);
  });

  it("commits on the head only, refuses an unchanged text, keeps a commit with errors", () => {
    const db = fresh();
    const { network, commit } = createNetwork(
      { workspaceId: "ws_lm64", name: "d", text: DIVIDER, authorId: "u_designer1" },
      db,
    );
    const bad = `${DIVIDER}nfet m2 gate=nowhere\n`;
    const c2 = commitText(
      { networkId: network.id, parentId: commit!.id, text: bad, message: "try m2", authorId: "u_designer2" },
      db,
    );
    expect(c2.parentId).toBe(commit!.id);
    expect(c2.ok).toBe(false);
    expect(c2.errorCount).toBeGreaterThan(0);
    expect(c2.diagnostics[0]).toMatchObject({ severity: "error", line: 6 });
    expect(c2.authorName).toBe("Mina Osei");
    const stale = errorOf(() =>
      commitText(
        { networkId: network.id, parentId: commit!.id, text: DIVIDER + "\n", message: "x", authorId: "u_designer1" },
        db,
      ),
    );
    expect(stale.status).toBe(409);
    expect(stale.details.head).toBe(c2.id);
    const same = errorOf(() =>
      commitText({ networkId: network.id, parentId: c2.id, text: bad, message: "again", authorId: "u_designer1" }, db),
    );
    expect(same.status).toBe(409);
    expect(same.message).toMatch(/nothing to commit/);
    expect(
      errorOf(() =>
        commitText(
          { networkId: network.id, parentId: c2.id, text: DIVIDER, message: "  ", authorId: "u_designer1" },
          db,
        ),
      ).status,
    ).toBe(400);
    // back to the first text on a new parent: a new commit
    const c3 = commitText(
      { networkId: network.id, parentId: c2.id, text: DIVIDER, message: "drop m2", authorId: "u_designer1" },
      db,
    );
    expect(c3.id).not.toBe(commit!.id);
    expect(listCommits(network.id, db).map((c) => c.id)).toEqual([c3.id, c2.id, commit!.id]);
    expect(getCommit(c3.id, db)!.text).toBe(DIVIDER);
    const summary = listNetworks("ws_lm64", {}, db).find((n) => n.id === network.id);
    expect(summary).toMatchObject({ id: network.id, commitCount: 3, head: { id: c3.id, message: "drop m2" } });
  });

  it("renames without changing the URL name, and refuses an empty name", () => {
    const db = fresh();
    const { network } = createNetwork({ workspaceId: "ws_lm64", name: "row", authorId: "u_designer1" }, db);
    expect(renameNetwork(network.id, "  LM-64   test row ", db)).toMatchObject({ name: "LM-64 test row", slug: "row" });
    expect(errorOf(() => renameNetwork(network.id, " ", db)).message).toBe("name: must not be empty");
  });
});

describe("the demo seed", () => {
  it("commits the example networks with a finished run each, idempotently", async () => {
    const db = fresh();
    const { listRuns } = await import("@/app/lib/runs");
    const { DEMO_NETWORKS, seedWork } = await import("@/scripts/seed/work");
    const demo = listNetworks("ws_lm64", {}, db).filter((n) => DEMO_NETWORKS.some((d) => slugify(d.name) === n.slug));
    expect(demo).toHaveLength(DEMO_NETWORKS.length);
    for (const n of demo) {
      const runs = listRuns({ commitId: n.headCommitId! }, undefined, db);
      expect(runs.map((r) => [n.slug, r.state, r.pointsDone === r.pointsTotal])).toEqual([[n.slug, "done", true]]);
    }
    // the first cut, the 750 mV head, and the review seed's 760 mV commit that fails edge_contrast
    expect(demo.find((n) => n.slug === "lm-64-edge-row")!.commitCount).toBe(3);
    expect(seedWork(db)).toEqual({ networks: 0, runs: 0 });
  });
});
