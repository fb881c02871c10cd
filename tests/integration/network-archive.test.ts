/**
 * Archiving a network (app/lib/networks.ts setNetworkArchived): it leaves the
 * workspace's list and shows in the archived one, its commits and runs stay,
 * and bringing it back restores it to the list unchanged. Who may archive and
 * restore is in tests/integration/access-matrix.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { DB } from "@/db";
import { createNetwork, getNetwork, listCommits, listNetworks, setNetworkArchived } from "@/app/lib/networks";
import { seedDemo } from "@/scripts/seed/index";
import { freshDatabase } from "../helpers/db";

let shared: { db: DB; dispose(): void };
const workspaceId = "ws_lm64";
const authorId = "u_designer1";
beforeAll(() => {
  shared = freshDatabase();
  seedDemo(shared.db);
});
afterAll(() => shared.dispose());

const TEXT = `network a
rail vdd = 1
rail gnd = 0
inject bias from=vdd to=x value=10n
nfet m1 gate=vdd source=gnd drain=x
`;

describe("archive and restore", () => {
  it("hides an archived network from the list, keeps its history and brings it back", () => {
    const db = shared.db;
    const { network } = createNetwork({ workspaceId, name: "Old row", text: TEXT, message: "first", authorId }, db);
    expect(listNetworks(workspaceId, {}, db).map((n) => n.id)).toContain(network.id);
    const archived = setNetworkArchived(network.id, true, db);
    expect(archived.archivedAt).toBeTypeOf("number");
    expect(listNetworks(workspaceId, {}, db).map((n) => n.id)).not.toContain(network.id);
    expect(listNetworks(workspaceId, { archived: true }, db).map((n) => n.id)).toEqual([network.id]);
    expect(listCommits(network.id, db)).toHaveLength(1);
    setNetworkArchived(network.id, false, db);
    expect(getNetwork(network.id, db)?.archivedAt).toBeNull();
    expect(listNetworks(workspaceId, {}, db).map((n) => n.id)).toContain(network.id);
    expect(listNetworks(workspaceId, { archived: true }, db)).toEqual([]);
  });
});
