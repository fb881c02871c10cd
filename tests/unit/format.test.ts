import { describe, expect, it } from "vitest";
import { formatDuration, formatEng, formatNumber } from "@/app/lib/format";

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
