import { describe, expect, it } from "vitest";
import { indexedGroups } from "@/app/lib/indexed-names";

describe("indexedGroups", () => {
  it("groups one-index names into sorted profiles and two-index names into grids", () => {
    const names = ["vdd", "x10", "x2", "x1", "n0_0", "n0_1", "n1_0", "n1_1", "out1", "out2", "gnd", "n1_2"];
    const { profiles, grids } = indexedGroups(names);
    expect(profiles).toEqual([{ stem: "x", index: [1, 2, 10], at: [3, 2, 1] }]);
    expect(grids).toEqual([
      {
        stem: "n",
        rows: 2,
        cols: 3,
        at: [
          [4, 5, -1],
          [6, 7, 11],
        ],
      },
    ]);
  });
  it("keeps short stems out unless asked", () => {
    expect(indexedGroups(["out1", "out2"]).profiles).toEqual([]);
    expect(indexedGroups(["out1", "out2"], 2).profiles).toHaveLength(1);
  });
});
