/**
 * Bench data on the run page's plots: measured points at their own x merged
 * onto a curve's x axis (app/ui/plots/align-marks.ts), and the unit
 * and label helpers of app/ui/run/bench-data.ts. Pure bookkeeping,
 * no physics: the expected columns are written out by hand.
 */
import { describe, expect, it } from "vitest";
import { siUnit } from "@/app/ui/run/bench-data";
import { alignMarks } from "@/app/ui/plots/align-marks";

describe("alignMarks", () => {
  it("passes x and the curves through unchanged when there are no marks", () => {
    const x = [0, 1, 2];
    const values = [1, null, 3];
    const a = alignMarks(x, [{ label: "c", values }], []);
    expect(a.x).toBe(x);
    expect(a.curves[0]).toBe(values);
    expect(a.marks).toEqual([]);
  });

  it("puts curves and marks on the sorted union of their x, undefined where a series has no value", () => {
    const a = alignMarks(
      [0, 2, 4],
      [{ label: "sim", values: [10, null, 30] }],
      [{ label: "measured: m", x: [3, 0, 5], y: [7, 8, 9], colour: "#b4532a" }],
    );
    expect(a.x).toEqual([0, 2, 3, 4, 5]);
    // the curve keeps its null (a real gap) and is undefined at the added x (joined over by uPlot)
    expect(a.curves[0]).toEqual([10, null, undefined, 30, undefined]);
    expect(a.marks[0]).toEqual([8, undefined, 7, undefined, 9]);
  });

  it("drops non-finite x of the marks rather than putting them on the axis", () => {
    const a = alignMarks(
      [1, 2],
      [{ label: "sim", values: [1, 2] }],
      [{ label: "m", x: [NaN, 1.5], y: [5, 6], colour: "#b4532a" }],
    );
    expect(a.x).toEqual([1, 1.5, 2]);
    expect(a.marks[0]).toEqual([undefined, 6, undefined]);
  });
});

describe("siUnit", () => {
  it("reduces a CSV unit to the SI symbol the overlay's values are in", () => {
    expect(siUnit("nA")).toBe("A");
    expect(siUnit("mV")).toBe("V");
    expect(siUnit("K")).toBe("K");
    expect(siUnit("1")).toBe("");
  });
});
