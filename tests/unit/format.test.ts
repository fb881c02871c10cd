import { describe, expect, it } from "vitest";
import { formatDuration, formatEng, formatNumber, formatValue, plotPrecision, roundTo } from "@/app/lib/format";

describe("formatEng (engineering notation with SI prefixes, BIPM SI Brochure 9th ed. 2019, prefix table)", () => {
  it.each([
    [1.234e-8, "A", "12.3 nA"],
    [-1.234e-8, "A", "−12.3 nA"],
    [0.45, "V", "450 mV"],
    [1, "V", "1 V"],
    [2.5e-15, "A", "2.5 fA"],
    [3.5e-6, "A", "3.5 µA"],
    [999.96e-6, "A", "1 mA"],
    [0, "A", "0 A"],
    [12345, "", "12.3k"],
    [1.729e-25, "A", "173 rA"],
    [1e-30, "A", "1 qA"],
    [1e-33, "A", "1e-33 A"],
  ])("%s %s → %s", (v, unit, text) => {
    expect(formatEng(v, unit)).toBe(text);
  });
  it("rounds to fewer digits than the mantissa has without e-notation", () => {
    expect(formatEng(7.83e-22, "A", 2)).toBe("780 yA");
    expect(formatEng(0.1234, "V", 2)).toBe("120 mV");
    expect(formatEng(1.5, "V", 1)).toBe("2 V");
  });
  it("shows unknown as a dash and infinities as ∞", () => {
    expect(formatEng(NaN, "A")).toBe("—");
    expect(formatEng(Infinity, "V")).toBe("∞ V");
  });
  it("formats plain numbers and durations", () => {
    expect(formatNumber(0.000012)).toBe("1.2e-5");
    expect(formatNumber(0.5)).toBe("0.5");
    expect(formatDuration(850)).toBe("850 ms");
    expect(formatDuration(12_400)).toBe("12.4 s");
    expect(formatDuration(185_000)).toBe("3 min 5 s");
  });
});

describe("roundTo (the compare page's relative changes are sent at 4 digits)", () => {
  it("rounds to significant digits, not decimals, and leaves integers and non-finite values", () => {
    expect(roundTo(-0.0123456789, 4)).toBe(-0.01235);
    expect(roundTo(1.23456789e-9, 4)).toBe(1.235e-9);
    expect(roundTo(98765.4321, 4)).toBe(98770);
    expect(roundTo(3, 4)).toBe(3);
    expect(roundTo(Number.NaN, 4)).toBeNaN();
    expect(roundTo(Number.POSITIVE_INFINITY, 4)).toBe(Number.POSITIVE_INFINITY);
  });
});

describe("plotPrecision (values sent for plots)", () => {
  it("keeps 7 significant digits of fractions, leaves integers and non-finite values, and reads the same at 4", () => {
    const values = [1.2345678912345e-21, -0.7213456789, 12345.678901, 3, 0, -42];
    const sent = JSON.parse(JSON.stringify({ values, nan: NaN }, plotPrecision)) as { values: number[] };
    expect(sent.values).toEqual([1.234568e-21, -0.7213457, 12345.68, 3, 0, -42]);
    for (let i = 0; i < values.length; i++) expect(formatValue(sent.values[i], "A")).toBe(formatValue(values[i], "A"));
    // what a solver writes: 16-17 significant digits
    const solved = Array.from({ length: 1000 }, (_, k) => Math.exp(-k / 37) * 1e-9);
    expect(JSON.stringify(solved, plotPrecision).length).toBeLessThan(JSON.stringify(solved).length * 0.6);
  });
});
