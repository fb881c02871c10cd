/**
 * Log-axis ranges and ticks (app/ui/plots/log-ticks.ts). Bookkeeping checked
 * against values written out by hand; the decades are the literals "1e{e}",
 * which IEEE 754 round-to-nearest makes the doubles closest to 10^e (common
 * practice: JavaScript's Number parsing is correctly rounded, ECMA-262 §7.1.4.1.1).
 */
import { describe, expect, it } from "vitest";
import { decade, decadeStep, isDecade, labelledDecade, logRange, logSplits } from "@/app/ui/plots/log-ticks";

describe("log axis", () => {
  it("spans whole decades around a 14-decade current range", () => {
    const [lo, hi] = logRange(8.7e-25, 4.9e-11);
    expect(lo).toBe(1e-25);
    expect(hi).toBe(1e-10);
  });

  it("ticks a 14-decade range at its decades only, each exactly the literal", () => {
    const s = logSplits(1e-25, 1e-10);
    expect(s).toHaveLength(16);
    expect(s[0]).toBe(1e-25);
    expect(s[1]).toBe(1e-24); // Math.pow(10, -24) is not this double
    expect(s.at(-1)).toBe(1e-10);
    expect(s.every(isDecade)).toBe(true);
  });

  it("adds 2…9 within a short range and stays inside it", () => {
    expect(logSplits(2e-9, 3e-8)).toEqual([2e-9, 3e-9, 4e-9, 5e-9, 6e-9, 7e-9, 8e-9, 9e-9, 1e-8, 2e-8, 3e-8]);
  });

  it("stays finite for the widest ranges and for nonsense", () => {
    expect(logSplits(1e-300, 1e300).length).toBe(601);
    expect(logSplits(0, 1)).toEqual([]);
    expect(logSplits(-1, 1)).toEqual([]);
    expect(logRange(0, 1)).toEqual([1, 10]);
    expect(logRange(5, 5)).toEqual([1, 10]);
  });

  it("labels every k-th decade on a long axis", () => {
    expect(decadeStep(15)).toBe(2);
    expect(decadeStep(6)).toBe(1);
    expect(labelledDecade(1e-24, 2)).toBe(true);
    expect(labelledDecade(1e-25, 2)).toBe(false);
    expect(labelledDecade(2e-24, 1)).toBe(false);
    expect(decade(-24)).toBe(1e-24);
  });
});
