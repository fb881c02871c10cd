import { describe, expect, it } from "vitest";
import { decodePoint, encodePoint, pointData, type PointHeader } from "@/app/lib/point-codec";

const bytes = (a: ArrayBufferView) => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);

describe("the binary point form", () => {
  it("round-trips every array, with odd lengths and a header that needs padding", () => {
    const nodes = Float64Array.from([0.1, 0.2, NaN]);
    const rails = Float64Array.from([-1e-9]);
    const probes = Float64Array.from([2.5, Infinity]);
    const params = Float64Array.from([0.7, 300]);
    const current = Float64Array.from([1e-9, -2e-12, 3e-15, 4e-18, 5e-21]);
    const ic = Float32Array.from([0.01, NaN, 0.2, 3, 40]);
    const saturated = Uint8Array.from([1, 0, 1, 1, 0]);
    const header: PointHeader = {
      point: 7,
      sample: 2,
      grid: [1, 3],
      method: "linear",
      iterations: 1,
      residual: 1e-21,
      error: null,
      counts: { nodes: 3, rails: 1, probes: 2, params: 2, devices: 5 },
    };
    const enc = encodePoint(header, [nodes, rails, probes, params, current, ic, saturated].map(bytes));
    // decode from a copy (a fresh ArrayBuffer, as fetch gives it)
    const d = decodePoint(enc.slice().buffer);
    expect(d.header).toEqual(header);
    expect(Array.from(d.nodes)).toEqual(Array.from(nodes));
    expect(Array.from(d.rails)).toEqual([-1e-9]);
    expect(Array.from(d.probes)).toEqual([2.5, Infinity]);
    expect(Array.from(d.params)).toEqual([0.7, 300]);
    expect(Array.from(d.current)).toEqual(Array.from(current));
    expect(Array.from(d.ic)).toEqual(Array.from(ic));
    expect(Array.from(d.saturated)).toEqual([1, 0, 1, 1, 0]);
    const p = pointData(
      {
        nodes: ["a", "b", "vdd"],
        nodeIsRail: [false, false, true],
        devices: ["m1", "m2", "m3", "m4", "m5"],
        deviceTypes: "nnnpp",
        rails: ["vdd"],
        probes: ["r", "s"],
        params: ["vh", "temp"],
      },
      d,
    );
    expect(p.params).toEqual({ vh: 0.7, temp: 300 });
    expect(p.devices.types).toBe("nnnpp");
  });
});
