/**
 * The binary form of one stored point (GET /api/runs/[id]/results?view=point&format=binary):
 * the run page's tables read it, because a point of a large network is tens of
 * thousands of numbers and JSON-encoding them costs the request thread more
 * than copying the stored blobs.
 *
 * Layout (little-endian): u32 header length H; H bytes of UTF-8 JSON (PointHeader);
 * zero padding to a multiple of 8; then the arrays in SECTION order, each
 * `count × element size` bytes, each Float64 section starting on a multiple of 8.
 * Names are not repeated here: they are the run's layout (view=layout).
 * Pure: used on the server (encode) and in the browser (decode).
 */

export interface PointHeader {
  point: number;
  sample: number;
  grid: number[];
  method: string;
  iterations: number;
  residual: number;
  error: string | null;
  /** Element counts: nodes, rails, probes, params, devices. */
  counts: { nodes: number; rails: number; probes: number; params: number; devices: number };
}

export interface DecodedPoint {
  header: PointHeader;
  nodes: Float64Array;
  rails: Float64Array;
  probes: Float64Array;
  params: Float64Array;
  current: Float64Array;
  ic: Float32Array;
  saturated: Uint8Array;
}

const pad8 = (n: number) => (n + 7) & ~7;

/**
 * Encodes a point from its stored blobs (each already the right element type);
 * `arrays` in the order nodes, rails, probes, params, current (Float64), ic (Float32), saturated (Uint8).
 */
export function encodePoint(header: PointHeader, arrays: readonly Uint8Array[]): Uint8Array<ArrayBuffer> {
  const json = new TextEncoder().encode(JSON.stringify(header));
  const start = pad8(4 + json.length);
  let size = start;
  for (const a of arrays) size += pad8(a.byteLength);
  const out = new Uint8Array(size);
  new DataView(out.buffer).setUint32(0, json.length, true);
  out.set(json, 4);
  let at = start;
  for (const a of arrays) {
    out.set(a, at);
    at += pad8(a.byteLength);
  }
  return out;
}

export function decodePoint(buf: ArrayBuffer): DecodedPoint {
  const view = new DataView(buf);
  const h = view.getUint32(0, true);
  const header = JSON.parse(new TextDecoder().decode(new Uint8Array(buf, 4, h))) as PointHeader;
  const c = header.counts;
  let at = pad8(4 + h);
  const f64 = (n: number) => {
    const a = new Float64Array(buf, at, n);
    at += pad8(n * 8);
    return a;
  };
  const nodes = f64(c.nodes);
  const rails = f64(c.rails);
  const probes = f64(c.probes);
  const params = f64(c.params);
  const current = f64(c.devices);
  const ic = new Float32Array(buf, at, c.devices);
  at += pad8(c.devices * 4);
  const saturated = new Uint8Array(buf, at, c.devices);
  return { header, nodes, rails, probes, params, current, ic, saturated };
}

/** Names the decoded arrays are in the order of (the run's layout; see app/lib/results.ts RunLayout). */
export interface PointNames {
  nodes: string[];
  nodeIsRail: boolean[];
  devices: string[];
  deviceTypes: string;
  rails: string[];
  probes: string[];
  params: string[];
}

/** One point with its names, as the run page's tables and plots read it; NaN where a value is unknown. */
export interface PointData {
  point: number;
  sample: number;
  grid: number[];
  params: Record<string, number>;
  solver: { method: string; iterations: number; residual: number };
  error: string | null;
  nodes: { names: string[]; isRail: boolean[]; voltage: Float64Array };
  devices: { names: string[]; types: string; current: Float64Array; ic: Float32Array; saturated: Uint8Array };
  rails: { names: string[]; current: Float64Array };
  probes: { names: string[]; value: Float64Array };
}

export function pointData(names: PointNames, p: DecodedPoint): PointData {
  const h = p.header;
  return {
    point: h.point,
    sample: h.sample,
    grid: h.grid,
    params: Object.fromEntries(names.params.map((n, j) => [n, p.params[j]])),
    solver: { method: h.method, iterations: h.iterations, residual: h.residual },
    error: h.error,
    nodes: { names: names.nodes, isRail: names.nodeIsRail, voltage: p.nodes },
    devices: { names: names.devices, types: names.deviceTypes, current: p.current, ic: p.ic, saturated: p.saturated },
    rails: { names: names.rails, current: p.rails },
    probes: { names: names.probes, value: p.probes },
  };
}
