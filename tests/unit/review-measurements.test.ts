import { describe, expect, it } from "vitest";
import {
  compareToSimulation,
  formatCsvError,
  interpolate,
  invalidUtf8At,
  MAX_MEASUREMENT_BYTES,
  parseMeasurementCsv,
  parseUnit,
  type CsvError,
} from "@/app/lib/review/measurements";

const utf8 = (s: string) => new TextEncoder().encode(s);
function errors(input: string | Uint8Array): CsvError[] {
  const r = parseMeasurementCsv(input);
  if (r.ok) throw new Error("expected the file to be refused");
  return r.errors;
}

describe("measurement CSV", () => {
  it("parses a good file: notes skipped, units scaled to SI, written units kept", () => {
    const r = parseMeasurementCsv(
      utf8("# bench, chip 3 (invented)\nvin [mV], i_out [nA], i_ref (pA)\n100, 1.5, 20\n\n200, 3, 40\n300, 6, 80\n"),
    );
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const m = r.measurement;
    expect(m.rows).toBe(3);
    expect(m.x).toMatchObject({ name: "vin", unit: "mV", dimension: "V" });
    expect([...m.x.values]).toEqual([0.1, 0.2, 0.3]);
    expect(m.series.map((s) => [s.name, s.unit, s.dimension])).toEqual([
      ["i_out", "nA", "A"],
      ["i_ref", "pA", "A"],
    ]);
    expect([...m.series[0].values]).toEqual([1.5e-9, 3e-9, 6e-9]);
    expect([...m.series[1].values]).toEqual([2e-11, 4e-11, 8e-11]);
  });

  it("accepts semicolons, tabs, CRLF, a UTF-8 BOM, decreasing x and a plain-number column", () => {
    for (const text of ["\ufefft [K];ratio [1]\r\n350;1.2\r\n300;1.1\r\n", "t [K]\tratio [1]\n350\t1.2\n300\t1.1\n"]) {
      const r = parseMeasurementCsv(utf8(text));
      expect(r.ok, text).toBe(true);
      if (r.ok) expect([...r.measurement.x.values]).toEqual([350, 300]);
    }
  });

  it("units: a prefix and V, A or K, or 1", () => {
    expect(parseUnit("nA")).toEqual({ dimension: "A", scale: 1e-9 });
    expect(parseUnit("µV")).toEqual({ dimension: "V", scale: 1e-6 });
    expect(parseUnit("1")).toEqual({ dimension: "1", scale: 1 });
    for (const bad of ["", "nm", "Ohm", "mAA", "volt"]) expect(parseUnit(bad), bad).toBeNull();
  });

  it("names row and column of a non-number, an empty cell and a unit in a cell", () => {
    const e = errors("vin [V], i_out [nA]\n0.1, 1.5\n0.2, 3x\n0.3,\n0.4, 5nA\n0.5, 0x10\n");
    expect(e.map((x) => [x.row, x.column, x.columnName])).toEqual([
      [3, 2, "i_out"],
      [4, 2, "i_out"],
      [5, 2, "i_out"],
      [6, 2, "i_out"],
    ]);
    expect(formatCsvError(e[0])).toBe(
      'row 3, column 2 (i_out): "3x" is not a number; write plain decimals such as 1.5e-9 (the unit belongs in the header)',
    );
    expect(e[1].message).toMatch(/^an empty cell is not a number/);
  });

  it("wrong columns: one column, a missing unit, an unknown unit, a repeated name, a short row", () => {
    expect(errors("vin [V]\n1\n2\n")[0]).toMatchObject({ row: 1, column: 1 });
    expect(errors("vin [V]\n1\n2\n")[0].message).toMatch(/one column/);
    expect(errors("# notes\nvin [V], i_out\n1, 2\n")[0]).toMatchObject({
      row: 2,
      column: 2,
      message: expect.stringMatching(/has no unit/),
    });
    expect(errors("vin [V], i_out [ohm]\n1, 2\n")[0]).toMatchObject({
      row: 1,
      column: 2,
      columnName: "i_out",
      message: expect.stringMatching(/unit "ohm" is not known/),
    });
    expect(errors("vin [V], vin [A]\n1, 2\n")[0]).toMatchObject({
      row: 1,
      column: 2,
      message: expect.stringMatching(/appears twice/),
    });
    expect(errors("vin [V], i [A]\n1, 2\n2\n3, 4\n")[0]).toMatchObject({
      row: 3,
      column: 2,
      message: "this row has 1 cells; the header has 2",
    });
    expect(errors("vin [V], i [A]\n1, 2, 3\n2, 3\n")[0]).toMatchObject({ row: 2, column: 3 });
  });

  it("x must be a sweep axis: strictly monotonic", () => {
    expect(errors("vin [V], i [A]\n1, 1\n2, 1\n2, 1\n")[0]).toMatchObject({
      row: 4,
      column: 1,
      message: expect.stringMatching(/repeats/),
    });
    expect(errors("vin [V], i [A]\n1, 1\n2, 1\n1.5, 1\n")[0]).toMatchObject({
      row: 4,
      column: 1,
      message: expect.stringMatching(/strictly increasing/),
    });
  });

  it("refuses too few rows, an empty file and a file over 10 MB", () => {
    expect(errors("vin [V], i [A]\n1, 2\n")[0].message).toMatch(/at least 2 data rows/);
    expect(errors("")[0].message).toMatch(/empty/);
    expect(errors("\n# only notes\n\n")[0].message).toMatch(/empty/);
    const big = new Uint8Array(MAX_MEASUREMENT_BYTES + 1).fill(0x31);
    expect(errors(big)[0]).toMatchObject({ row: 0, column: 0, message: expect.stringMatching(/at most 10 MB/) });
    expect(formatCsvError(errors(big)[0])).toMatch(/^file: /);
  });

  it("refuses wrong encodings with the position: Latin-1 bytes, UTF-16, NUL bytes", () => {
    const latin1 = new Uint8Array([...utf8("vin [V], i [A]\n1, "), 0xb5, ...utf8("2\n")]);
    expect(errors(latin1)[0]).toMatchObject({
      row: 2,
      column: 2,
      message: expect.stringMatching(/byte 0xB5 .* not valid UTF-8/),
    });
    const utf16 = new Uint8Array([0xff, 0xfe, 0x76, 0x00, 0x69, 0x00]);
    expect(errors(utf16)[0]).toMatchObject({ row: 1, column: 1, message: expect.stringMatching(/UTF-16/) });
    expect(errors(new Uint8Array([0x61, 0x2c, 0x00]))[0].message).toMatch(/NUL/);
  });

  it("the UTF-8 check follows RFC 3629 (overlong forms, surrogates, truncation)", () => {
    expect(invalidUtf8At(utf8("plain µ € 𝄞"))).toBe(-1);
    expect(invalidUtf8At(new Uint8Array([0x41, 0xc0, 0x80]))).toBe(1); // overlong NUL
    expect(invalidUtf8At(new Uint8Array([0xe0, 0x80, 0x80]))).toBe(0); // overlong
    expect(invalidUtf8At(new Uint8Array([0xed, 0xa0, 0x80]))).toBe(0); // surrogate U+D800
    expect(invalidUtf8At(new Uint8Array([0x41, 0xe2, 0x82]))).toBe(1); // truncated
    expect(invalidUtf8At(new Uint8Array([0xf4, 0x90, 0x80, 0x80]))).toBe(0); // above U+10FFFF
  });
});

describe("measurement against simulation", () => {
  const curve = { x: [0, 1, 2, 3], y: [1e-9, 2e-9, 4e-9, 8e-9] };

  it("interpolates linearly inside the range, NaN outside, either direction", () => {
    expect(interpolate(curve, 1.5)).toBeCloseTo(3e-9, 20);
    expect(interpolate(curve, 3)).toBe(8e-9);
    expect(interpolate(curve, -0.1)).toBeNaN();
    expect(interpolate({ x: [3, 2, 1, 0], y: [8, 4, 2, 1] }, 0.5)).toBeCloseTo(1.5, 12);
  });

  it("RMS of the log ratio and the largest absolute error", () => {
    // measured = simulated·e^{±0.1} alternately: every |ln ratio| is 0.1, so the RMS is 0.1 exactly.
    const x = [0, 1, 2, 3, 4];
    const m = [1e-9 * Math.exp(0.1), 2e-9 * Math.exp(-0.1), 4e-9 * Math.exp(0.1), 8e-9 * Math.exp(-0.1), 1];
    const a = compareToSimulation(x, m, curve);
    expect(a.n).toBe(4);
    expect(a.outside).toBe(1);
    expect(a.rmsLogRatio).toBeCloseTo(0.1, 12);
    expect(a.maxAbsError).toBeCloseTo(8e-9 * (1 - Math.exp(-0.1)), 20);
    expect(a.maxAbsErrorAt).toBe(3);
  });

  it("leaves points with opposite signs out of the log ratio and counts them", () => {
    const a = compareToSimulation([0, 1], [-1e-9, 2e-9], curve);
    expect(a.signMismatch).toBe(1);
    expect(a.rmsLogRatio).toBe(0);
    expect(a.maxAbsError).toBeCloseTo(2e-9, 20);
    expect(compareToSimulation([9], [1], curve).rmsLogRatio).toBeNaN();
  });
});
