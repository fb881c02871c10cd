/**
 * Exports stream in bounded chunks: a point of a large network is cut into
 * pieces of NAMES_PER_CHUNK names, whose bytes are exactly those of the whole
 * document; a run that did not end `done` says so in the file.
 */
import { describe, expect, it } from "vitest";
import { csvRows, NAMES_PER_CHUNK, partialNote, pointJson, pointJsonChunks } from "@/app/lib/export";
import type { StoredPoint } from "@/app/lib/point-codec";
import type { RunLayout } from "@/app/lib/results";

const N = NAMES_PER_CHUNK * 2 + 17;
const layout: RunLayout = {
  network: "chain",
  nodes: ["vdd", ...Array.from({ length: N }, (_, k) => `x${k}`), "gnd"],
  nodeIsRail: [true, ...Array.from({ length: N }, () => false), true],
  devices: Array.from({ length: N + 5 }, (_, k) => `d"${k}`),
  deviceTypes: "n".repeat(N + 5),
  rails: ["vdd", "gnd"],
  probes: ["ratio"],
  params: ["i", "temp"],
  sweeps: [{ param: "i", values: [1e-9], log: false }],
  mismatch: null,
};
const point: StoredPoint = {
  point: 0,
  sample: 0,
  params: Float64Array.from([1e-9, 300]),
  probes: Float64Array.from([NaN]),
  method: "linear",
  iterations: 1,
  residual: 1e-21,
  error: "node x3: not finite",
  rails: Float64Array.from([1.8, 0]),
  nodes: Float64Array.from(layout.nodes, (_, k) => (k === 5 ? Infinity : 0.001 * k)),
  current: Float64Array.from(layout.devices, (_, k) => 1e-12 * (k + 1)),
  ic: Float32Array.from(layout.devices, (_, k) => (k % 3 ? 0.01 : NaN)),
  saturated: Uint8Array.from(layout.devices, (_, k) => k % 2),
};

describe("chunked exports", () => {
  it("a point's JSON in chunks is byte for byte the whole point's JSON", () => {
    const chunks = [...pointJsonChunks(layout, point)];
    expect(chunks.length).toBeGreaterThan(4);
    expect(chunks.join("")).toBe(JSON.stringify(pointJson(layout, point)));
    expect(Math.max(...chunks.map((c) => c.length))).toBeLessThan(NAMES_PER_CHUNK * 120);
  });

  it("a point's CSV rows come NAMES_PER_CHUNK rows at a time", () => {
    const chunks = [...csvRows(layout, "devices", point)];
    expect(chunks).toHaveLength(Math.ceil((N + 5) / NAMES_PER_CHUNK));
    const lines = chunks.join("").split("\r\n").filter(Boolean);
    expect(lines).toHaveLength(N + 5);
    expect(lines[0]).toBe('0,0,"d""0",nfet,1e-12,,0');
  });

  it("a run that did not end done is marked partial; a done run is not", () => {
    const run = { id: "r_x", state: "interrupted", reason: "the server stopped", pointsDone: 3, pointsTotal: 10 };
    expect(partialNote(run)).toBe(
      "run r_x is interrupted (the server stopped): this file holds the 3 of 10 points stored so far, not a complete result",
    );
    expect(partialNote({ ...run, state: "canceled", reason: null })).toMatch(/^run r_x is canceled: this file holds/);
    expect(partialNote({ ...run, state: "done", pointsDone: 10 })).toBeNull();
  });
});
