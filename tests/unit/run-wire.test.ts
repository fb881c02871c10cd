/**
 * A queue worker's batch (app/lib/run-wire.ts): the verdicts and margins of a solved point travel in its header and
 * come back as they were sent (a NaN margin as NaN); a batch whose verdicts do not fit the run's expectations is
 * refused with the point and what is wrong, and nothing of it is returned.
 */
import { describe, expect, it } from "vitest";
import type { StoredPoint } from "@/app/lib/point-codec";
import { BatchError, decodeBatch, encodeBatch } from "@/app/lib/run-wire";

const counts = { nodes: 3, rails: 1, probes: 1, params: 2, devices: 2 };
const point = (k: number, extra: Partial<StoredPoint> = {}): StoredPoint => ({
  point: k,
  sample: 0,
  method: "newton",
  iterations: 4,
  residual: 1e-15,
  error: null,
  nodes: new Float64Array([0.1, 0.2, 0.3]),
  rails: new Float64Array([-2e-8]),
  probes: new Float64Array([1.5]),
  params: new Float64Array([0.01, 300]),
  current: new Float64Array([1e-8, 1e-8]),
  ic: new Float32Array([0.01, 0.02]),
  saturated: new Uint8Array([1, 0]),
  ...extra,
});
const verdicts = (passed: number[], margins: number[]) => ({
  expectations: { passed: Uint8Array.from(passed), margins: Float64Array.from(margins) },
});
const decode = (ps: StoredPoint[], expectations: number) =>
  decodeBatch(encodeBatch(ps, counts), counts, { start: 0, end: 10 }, 1, expectations);

describe("verdicts in a worker's batch", () => {
  it("come back as sent, a failed point without any", () => {
    const out = decode([point(0, verdicts([1, 0], [0.25, NaN])), point(1, { error: "did not converge" })], 2);
    expect([...out[0].expectations!.passed]).toEqual([1, 0]);
    expect(out[0].expectations!.margins[0]).toBe(0.25);
    expect(out[0].expectations!.margins[1]).toBeNaN();
    expect(out[1].expectations).toBeNull();
    expect(decode([point(0)], 0)[0].expectations).toBeNull();
  });

  it("are refused when missing, extra, of the wrong count or not 0/1", () => {
    const refused = (ps: StoredPoint[], n: number) => {
      try {
        decode(ps, n);
      } catch (e) {
        expect(e).toBeInstanceOf(BatchError);
        return (e as Error).message;
      }
      throw new Error("accepted");
    };
    expect(refused([point(0, verdicts([1], [0])), point(3)], 1)).toBe(
      "point 3: solved without the verdicts of the network's 1 expectations",
    );
    expect(refused([point(2, verdicts([1], [0]))], 0)).toBe("point 2: verdicts sent for a point that has none");
    expect(refused([point(2, verdicts([1], [0]))], 2)).toBe("point 2: verdicts are not 2 verdicts and 2 margins");
    expect(refused([point(2, verdicts([2], [0]))], 1)).toBe("point 2: a verdict is not 0 or 1");
  });
});
