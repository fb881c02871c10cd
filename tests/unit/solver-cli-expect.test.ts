/**
 * `runnel solve` with expect statements (docs/language.md, Expectations): the document's `expectations` and each
 * point's verdicts, printed a point at a time exactly as JSON.stringify prints the whole, and `--strict`'s exit
 * status: 0 when every expectation holds, 3 when one fails, 1 and 2 as without it.
 */
import { describe, expect, it } from "vitest";
import { networkFile, runCli } from "../helpers/cli";
import type { SolveJson } from "../../src/solver/json";
import { tailPair } from "../helpers/pair-sweep";

const file = (name: string, text: string) => networkFile(text, name);
const run = runCli;

// A pair swept over its input difference: the ratio exp(κΔV/U_T) is 1, 1.31, 1.72, 2.25 (Mead 1989 [derived]).
const PAIR = `${tailPair([0, 0.01, 0.02, 0.03])}expect sat = saturated devices=m*
`;
const passing = file("pass.runnel", PAIR + "expect ratio_ok = ratio <= 2.5\n");
const failing = file("fail.runnel", PAIR + "expect ratio_ok = ratio <= 2\n");

describe("runnel solve with expectations", () => {
  it("prints the contract's fields, in its order, after the points", () => {
    const { code, out } = run(["solve", failing, "--json"]);
    expect(code).toBe(0);
    const doc = JSON.parse(out) as SolveJson;
    expect(Object.keys(doc)).toEqual(["network", "ok", "diagnostics", "points", "expectations"]);
    expect(doc.expectations!.map((x) => Object.keys(x))).toEqual([
      ["name", "line", "passed", "points", "points_passed", "first_failure", "margin", "yield"],
      ["name", "line", "passed", "points", "points_passed", "first_failure", "margin", "yield"],
    ]);
    expect(doc.expectations![0]).toMatchObject({ name: "sat", line: 13, passed: true, points: 4, points_passed: 4 });
    expect(doc.expectations![1]).toMatchObject({
      name: "ratio_ok",
      line: 14,
      passed: false,
      points: 4,
      points_passed: 3,
      first_failure: { point: 3, params: { dv: 0.03 }, sample: null },
      yield: null,
    });
    // 2 − exp(0.7 · 0.03 / U_T(300 K)) = 2 − 2.2534 (Mead 1989 [derived]).
    expect(doc.expectations![1].margin!).toBeCloseTo(2 - Math.exp((0.7 * 0.03) / 0.025852), 3);
    expect(doc.points.map((p) => p.expectations)).toEqual([
      { sat: true, ratio_ok: true },
      { sat: true, ratio_ok: true },
      { sat: true, ratio_ok: true },
      { sat: true, ratio_ok: false },
    ]);
    expect(out).toBe(`${JSON.stringify(doc, null, 2)}\n`);
  });

  it("--strict exits 3 when an expectation fails, 0 when all hold, 1 for errors and 2 for usage", () => {
    expect(run(["solve", failing, "--json", "--strict"]).code).toBe(3);
    expect(run(["solve", failing, "--strict"]).code).toBe(3);
    expect(run(["solve", failing]).code).toBe(0);
    expect(run(["solve", passing, "--json", "--strict"]).code).toBe(0);
    const broken = file("broken.runnel", PAIR + "expect bad = saturated devices=q*\n");
    const b = run(["solve", broken, "--json", "--strict"]);
    expect(b.code).toBe(1);
    expect((JSON.parse(b.out) as SolveJson).ok).toBe(false);
    expect(run(["solve", "--strict"]).code).toBe(2);
    expect(run(["solve", passing, "--strictly"]).code).toBe(2);
  });

  it("a network without expectations prints no expectations field", () => {
    const plain = file("plain.runnel", PAIR.replace("expect sat = saturated devices=m*\n", ""));
    const doc = JSON.parse(run(["solve", plain, "--json"]).out) as SolveJson;
    expect("expectations" in doc).toBe(false);
    expect("expectations" in doc.points[0]).toBe(false);
  });

  it("the plain output says which expectation fails, where, and by how much", () => {
    const { out } = run(["solve", failing]);
    expect(out).toContain("expect sat (line 13): holds at all 4 points, margin");
    expect(out).toMatch(
      /expect ratio_ok \(line 14\): FAILS at 1 of 4 points, first at point 3 \(dv = 0\.03\), margin -0\.253/,
    );
  });

  it("with mismatch, the yield with its Wilson interval", () => {
    const mc = file(
      "mc.runnel",
      PAIR.replace("sweep dv values [0, 0.01, 0.02, 0.03]", "mismatch runs 200 seed 3 avt 5m") +
        "expect ratio_ok = 0.8 <= ratio <= 1.25\n",
    );
    const doc = JSON.parse(run(["solve", mc, "--json"]).out) as SolveJson;
    const y = doc.expectations![1].yield!;
    expect(y.samples).toBe(200);
    expect(y.passed).toBe(doc.points.filter((p) => p.expectations!.ratio_ok).length);
    expect(y.low).toBeLessThan(y.passed / 200);
    expect(y.high).toBeGreaterThanOrEqual(y.passed / 200);
    const f = doc.expectations![1].first_failure;
    if (f) expect(f.sample).toBe(f.point);
  });
});
