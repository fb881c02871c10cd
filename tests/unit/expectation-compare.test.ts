/**
 * The compare page's expectation changes (app/lib/review/expectation-compare.ts): each expectation's status before →
 * after from two runs' stored summaries, newly failing first; expectations only one side states are added or
 * removed; a side not run gives every expectation of the other as added or removed.
 */
import { describe, expect, it } from "vitest";
import { diffExpectations, orderChanges } from "@/app/lib/review/expectation-compare";
import type { ExpectationSummary } from "@/src/solver/expectation-summary";

const x = (name: string, passed: boolean, margin: number): ExpectationSummary => ({
  name,
  line: 1,
  unit: "V",
  passed,
  points: 10,
  pointsPassed: passed ? 10 : 4,
  notSolved: 0,
  firstFailure: passed ? null : { point: 3, params: {}, sample: null },
  margin,
  worstPoint: 3,
  yield: null,
  gridYield: null,
});

describe("expectation changes between two runs", () => {
  it("order newly failing first, then still failing, added, newly passing, removed, still passing", () => {
    const from = [x("a", true, 0.1), x("b", false, -0.2), x("c", false, -0.1), x("d", true, 0.3), x("gone", true, 1)];
    const to = [x("a", true, 0.1), x("b", false, -0.1), x("c", true, 0.05), x("d", false, -0.01), x("new", true, 2)];
    const changes = orderChanges(diffExpectations("sweep vh", from, to));
    expect(changes.map((c) => [c.name, c.change])).toEqual([
      ["d", "newly failing"],
      ["b", "still failing"],
      ["new", "added"],
      ["c", "newly passing"],
      ["gone", "removed"],
      ["a", "still passing"],
    ]);
    expect(changes[0]).toMatchObject({
      analysis: "sweep vh",
      from: { passed: true, margin: 0.3, unit: "V", pointsPassed: 10, points: 10 },
      to: { passed: false, margin: -0.01, pointsPassed: 4 },
    });
  });

  it("count a failing expectation new on the later side as newly failing", () => {
    expect(diffExpectations("op", null, [x("a", false, -1), x("b", true, 1)]).map((c) => c.change)).toEqual([
      "newly failing",
      "added",
    ]);
    expect(diffExpectations("op", [x("a", false, -1)], null).map((c) => c.change)).toEqual(["removed"]);
    expect(diffExpectations("op", null, null)).toEqual([]);
  });
});
