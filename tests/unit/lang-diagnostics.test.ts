import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { DEFAULT_LIMITS, elaborate } from "../../src/lang/index";
import type { Diagnostic } from "../../src/lang/network";

/**
 * Diagnostics corpus: cases `### title`, the network text, `==>`, then the
 * expected diagnostics, one `LINE:COLUMN: severity: message` per line with
 * `  hint: ...` under it, or `(none)`.
 */
interface Case {
  title: string;
  text: string;
  expected: string;
}

function cases(file: string): Case[] {
  const src = readFileSync(file, "utf8");
  return src
    .split(/^(?=### )/m)
    .filter((p) => p.trim())
    .map((p) => {
      const nl = p.indexOf("\n");
      const body = p.slice(nl + 1);
      const arrow = body.indexOf("==>\n");
      if (arrow < 0) throw new Error(`${file}: case without ==> near ${p.slice(0, 60)}`);
      return { title: p.slice(4, nl), text: body.slice(0, arrow), expected: body.slice(arrow + 4).trim() };
    });
}

function render(ds: Diagnostic[]): string {
  if (ds.length === 0) return "(none)";
  return ds
    .map((d) => `${d.line}:${d.column}: ${d.severity}: ${d.message}` + (d.hint ? `\n  hint: ${d.hint}` : ""))
    .join("\n");
}

const corpus = join(__dirname, "corpus/diagnostics");
for (const file of readdirSync(corpus).filter((f) => f.endsWith(".txt"))) {
  describe(`diagnostics corpus ${file}`, () => {
    for (const c of cases(join(corpus, file))) {
      it(c.title, () => {
        const r = elaborate(c.text);
        expect(render(r.diagnostics)).toBe(c.expected);
        expect(r.ok).toBe(!r.diagnostics.some((d) => d.severity === "error"));
        if (!r.ok) expect(r.network).toBeNull();
        for (const d of r.diagnostics) {
          expect(d.from).toBeGreaterThanOrEqual(0);
          expect(d.to).toBeGreaterThanOrEqual(d.from);
          expect(d.to).toBeLessThanOrEqual(c.text.length);
        }
      });
    }
  });
}

describe("planted errors", () => {
  it("five different errors give five diagnostics at their tokens", () => {
    const text = [
      "network planted", //                                   1
      "param vh = 450mV", //                                  2
      "param vv = vx - 100m", //                              3: unknown name vx at col 12
      "rail vdd = 1.8", //                                    4
      "rail gh = vh", //                                      5
      "rail gnd = 0", //                                      6
      "nfet m1 gate=gh source=x drain=vdd colour=red", //     7: unknown pin at col 36
      "pfet m2 gate=gh source=vdd drain=x", //                8: no well, at the name (col 6)
      "inject in from=x to=gnd value=2V", //                  9: volts for amperes at col 31
      "for k in 3..1 {", //                                   10: reversed range at col 10
      "  nfet d{k} gate=gh source=x drain=vdd",
      "}",
      "",
    ].join("\n");
    const r = elaborate(text);
    expect(r.ok).toBe(false);
    expect(r.diagnostics.map((d) => [d.line, d.column, d.severity])).toEqual([
      [3, 12, "error"],
      [7, 36, "error"],
      [8, 6, "error"],
      [9, 31, "error"],
      [10, 10, "error"],
    ]);
    expect(r.diagnostics.map((d) => d.message)).toEqual([
      "unknown name 'vx'",
      "nfet has no pin 'colour'",
      "pfet 'm2' has no well",
      "expected amperes (A) here, but this is volts (V)",
      "reversed range 3..1: a range runs upward and includes both ends",
    ]);
  });

  it("diagnostics are sorted by position and carry offsets of the offending token", () => {
    const text = "rail v = 1\nnfet m gate=v source=v drain=v bogus=v\nparam p = q\n";
    const r = elaborate(text);
    expect(r.diagnostics.map((d) => text.slice(d.from, d.to))).toEqual(["bogus", "q"]);
  });
});

describe("limits", () => {
  it("a file over 2 MB gets one error at 1:1 without parsing", () => {
    const r = elaborate("#".repeat(2 * 1024 * 1024 + 1));
    expect(r.diagnostics).toHaveLength(1);
    expect(r.diagnostics[0]).toMatchObject({ severity: "error", line: 1, column: 1, from: 0, to: 0 });
    expect(r.diagnostics[0].message).toMatch(/too large/);
  });

  it("too many devices: an error at the outermost for, and expansion stops", () => {
    const text =
      "rail v = 1\nfor i in 0..99 {\n  for j in 0..99 {\n    nfet m{i}_{j} gate=v source=v drain=v\n  }\n}\n";
    const r = elaborate(text, { limits: { maxDevices: 500 } });
    expect(r.ok).toBe(false);
    expect(r.diagnostics).toHaveLength(1);
    expect(r.diagnostics[0]).toMatchObject({ line: 2, column: 1, severity: "error" });
    expect(r.diagnostics[0].message).toBe("this loop makes more than 500 devices (the limit)");
  });

  it("default limits: 2 MB of text, 2,000,000 devices, 20,000,000 statement runs, depth 200", () => {
    expect(DEFAULT_LIMITS).toMatchObject({
      maxSourceLength: 2 * 1024 * 1024,
      maxDevices: 2_000_000,
      maxWork: 20_000_000,
      maxExpressionDepth: 200,
    });
  });

  it("loop expansion is bounded before the loop runs", () => {
    const r = elaborate("for i in 0..100000000 {\n}\n");
    expect(r.diagnostics).toHaveLength(1);
    expect(r.diagnostics[0]).toMatchObject({ line: 1, column: 1 });
    expect(r.diagnostics[0].message).toBe(
      "this loop makes 100,000,001 statement runs, more than the limit of 20,000,000",
    );
  });

  it("nested loops report the total statement runs of the outermost loop, not the inner loop's count", () => {
    const text = "for k in 0..50 {\n  for j in 0..50 {\n    rail r{k}_{j} = 1\n  }\n}\n";
    const r = elaborate(text, { limits: { maxWork: 1000 } });
    expect(r.diagnostics).toHaveLength(1);
    expect(r.diagnostics[0]).toMatchObject({ line: 1, column: 1 });
    // 51 outer iterations, each 1 + the inner for (1 + 51 × (1 + 1 rail)).
    expect(r.diagnostics[0].message).toBe("this loop makes 5,304 statement runs, more than the limit of 1,000");
    // The default limit: 5,001 × (1 + 1 + 5,001 × 1) with the body left empty by its error.
    const big = elaborate("for k in 0..5000 {\n  for j in 0..5000 {\n    param a = 1\n  }\n}\n");
    expect(big.diagnostics[0].message).toBe(
      "this loop makes 25,020,003 statement runs, more than the limit of 20,000,000",
    );
  });

  it("a loop whose inner bounds depend on the outer variable stops at the limit without a wrong count", () => {
    const text = "for k in 0..50 {\n  for j in 0..k {\n    rail r{k}_{j} = 1\n  }\n}\n";
    const r = elaborate(text, { limits: { maxWork: 1000 } });
    expect(r.diagnostics).toHaveLength(1);
    expect(r.diagnostics[0]).toMatchObject({ line: 1, column: 1 });
    expect(r.diagnostics[0].message).toBe("this loop makes more than 1,000 statement runs (the limit)");
  });

  it("expression nesting deeper than 200 is an error at the expression", () => {
    const deep = `param a = ${"(".repeat(250)}1${")".repeat(250)}\n`;
    const r = elaborate(deep);
    expect(r.diagnostics).toHaveLength(1);
    expect(r.diagnostics[0].message).toBe("this expression nests deeper than 200 levels");
    expect(r.diagnostics[0].line).toBe(1);
    const ok = elaborate(`param a = ${"(".repeat(150)}1${")".repeat(150)}\n`);
    expect(ok.ok).toBe(true);
    expect(ok.network!.params[0].value).toBe(1);
  });

  it("nesting far past the limit (where the parser gives up) gets the depth-limit message, not a syntax error", () => {
    // The place is the expression 201 levels in, as for nesting the parser still builds.
    for (const [text, column] of [
      [`param a = ${"(".repeat(100_001)}1${")".repeat(100_001)}\n`, 212],
      [`param a = ${"max(".repeat(5000)}1${")".repeat(5000)}\n`, 815],
      [`param a = ${"max(".repeat(300)}1${")".repeat(300)}\n`, 815],
    ] as const) {
      const r = elaborate(text);
      expect(r.diagnostics.map((d) => `${d.line}:${d.column} ${d.message}`)).toEqual([
        `1:${column} this expression nests deeper than 200 levels`,
      ]);
    }
  });

  it(
    "a degenerate parse with tens of thousands of error nodes still finishes with one diagnostic per line",
    { timeout: 120_000 },
    () => {
      // 300,000 unary minus signs: the parser gives up on the nesting and leaves ~90,000 error nodes on one line.
      const r = elaborate(`param a = ${"-".repeat(300_000)}1\n`);
      expect(r.ok).toBe(false);
      expect(r.diagnostics).toHaveLength(1);
      expect(r.diagnostics[0].line).toBe(1);
    },
  );

  it("a flood of diagnostics is capped", () => {
    const lines = Array.from({ length: 50 }, (_, i) => `param p${i} = q${i}`).join("\n");
    const r = elaborate(lines, { limits: { maxDiagnostics: 10 } });
    expect(r.diagnostics).toHaveLength(11);
    expect(r.diagnostics[10].message).toBe("40 more diagnostics not shown");
  });
});
