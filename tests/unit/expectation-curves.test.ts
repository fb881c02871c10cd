/** The Expectations panel's curves: grid decomposition, worst margins over samples, yield with its Wilson interval. */
import { describe, expect, it } from "vitest";
import { curvesAlong, gridIndices, sweptAt, worstPerGrid, yieldPerGrid } from "@/app/ui/run/expectation-curves";
import { wilsonInterval } from "@/src/solver/expectation-summary";

const sweeps = [
  { param: "a", values: [1, 2], log: false },
  { param: "b", values: [10, 20, 30], log: false },
];

describe("expectation curves", () => {
  it("decompose grid points outer sweep slowest, and name a point's swept values", () => {
    expect(gridIndices(sweeps, 0)).toEqual([0, 0]);
    expect(gridIndices(sweeps, 4)).toEqual([1, 1]);
    expect(sweptAt(sweeps, 3, 13)).toEqual({ a: 2, b: 20 }); // grid point 4, sample 1
  });

  it("draw one curve per value of the other sweep", () => {
    const curves = curvesAlong(sweeps, 1, [1, 2, 3, 4, 5, 6], "margin", (p, v) => `${p} = ${v}`);
    expect(curves).toEqual([
      { label: "margin at a = 1", values: [1, 2, 3] },
      { label: "margin at a = 2", values: [4, 5, 6] },
    ]);
  });

  it("take the worst margin over each grid point's samples, skipping points without one", () => {
    expect(worstPerGrid([0.3, -0.1, null, 0.2, null, null, null, null, null], 3)).toEqual([-0.1, 0.2, null]);
    expect(worstPerGrid([0.5, 0.4], 1)).toEqual([0.5, 0.4]);
  });

  it("give each grid point's yield with the Wilson interval (E. B. Wilson, JASA 22, 1927)", () => {
    const y = yieldPerGrid({ passed: [190, 200, 0], samples: [200, 200, 0] });
    expect(y.yield).toEqual([0.95, 1, null]);
    expect(y.low[0]).toBe(wilsonInterval(190, 200).low);
    expect(y.high[1]).toBe(1);
    expect(y.low[2]).toBeNull();
  });
});
