/**
 * A network's structure for the network page: which devices touch which
 * node. From the elaborated network of a commit (never re-parsing): a device
 * table (gate, source, drain, bulk), a node cross-reference (the devices and
 * injects at each node, its degree, whether it is a rail), both searchable and
 * capped for million-device networks, and for networks of at most
 * GRAPH_LIMIT devices the node–device graph the page lays out and draws.
 */
import { elaborate } from "@/src/lang";
import { NFET, SUBSTRATE, type Network } from "@/src/lang/network";

/** Largest network drawn as a graph (a drawing of more devices is a hairball, and its layout takes seconds). */
export const GRAPH_LIMIT = 400;
/** Rows a table answers with at most; the counts say how many matched. */
export const ROW_LIMIT = 500;
/** Devices listed per node in the cross-reference at most. */
export const DEVICES_PER_NODE = 40;

export interface StructureDevice {
  name: string;
  type: "nfet" | "pfet";
  gate: string;
  source: string;
  drain: string;
  /** Bulk node of an nfet ("substrate" when none is given), well of a pfet. */
  bulk: string;
}

export interface StructureNode {
  name: string;
  rail: boolean;
  /** Device terminals (gate, source, drain, bulk) and inject ends at the node. */
  degree: number;
  /** The devices and injects at the node, by name (at most DEVICES_PER_NODE; `more` counts the rest). */
  elements: string[];
  more: number;
}

export interface StructureView {
  network: string | null;
  query: string;
  devices: { total: number; matched: number; rows: StructureDevice[] };
  nodes: { total: number; matched: number; rows: StructureNode[] };
  injects: { name: string; from: string; to: string }[];
  /** The whole network for drawing, when it has at most GRAPH_LIMIT devices; else null. */
  graph: { nodes: { name: string; rail: boolean }[]; devices: StructureDevice[] } | null;
}

function nodeName(net: Network, k: number): string {
  return k === SUBSTRATE ? "substrate" : net.nodes.names[k];
}

function deviceAt(net: Network, i: number): StructureDevice {
  const d = net.devices;
  return {
    name: d.names[i],
    type: d.type[i] === NFET ? "nfet" : "pfet",
    gate: nodeName(net, d.gate[i]),
    source: nodeName(net, d.source[i]),
    drain: nodeName(net, d.drain[i]),
    bulk: nodeName(net, d.bulk[i]),
  };
}

/** The structure of `net` with the rows matching `query` (a substring of a name, ignoring case; empty: all). */
export function structureOf(net: Network, query = "", limit = ROW_LIMIT): StructureView {
  const q = query.trim().toLowerCase();
  const has = (s: string) => !q || s.toLowerCase().includes(q);
  const d = net.devices;
  const nNodes = net.nodes.names.length;
  const degree = new Int32Array(nNodes);
  const touch = (k: number) => {
    if (k >= 0) degree[k]++;
  };
  for (let i = 0; i < d.count; i++) {
    touch(d.gate[i]);
    touch(d.source[i]);
    touch(d.drain[i]);
    touch(d.bulk[i]);
  }
  for (let i = 0; i < net.injects.count; i++) {
    touch(net.injects.from[i]);
    touch(net.injects.to[i]);
  }
  // Devices: a row matches by its name or any of its nodes.
  const devRows: StructureDevice[] = [];
  let devMatched = 0;
  for (let i = 0; i < d.count; i++) {
    if (q) {
      const hit =
        has(d.names[i]) ||
        has(nodeName(net, d.gate[i])) ||
        has(nodeName(net, d.source[i])) ||
        has(nodeName(net, d.drain[i])) ||
        has(nodeName(net, d.bulk[i]));
      if (!hit) continue;
    }
    devMatched++;
    if (devRows.length < limit) devRows.push(deviceAt(net, i));
  }
  // Nodes: by name; their elements gathered in one more pass over the devices that touch the listed nodes.
  const listed = new Map<number, StructureNode>();
  let nodeMatched = 0;
  for (let k = 0; k < nNodes; k++) {
    if (!has(net.nodes.names[k])) continue;
    nodeMatched++;
    if (listed.size < limit)
      listed.set(k, {
        name: net.nodes.names[k],
        rail: Number.isFinite(net.nodes.railValue[k]),
        degree: degree[k],
        elements: [],
        more: 0,
      });
  }
  const add = (k: number, name: string) => {
    const n = listed.get(k);
    if (!n || n.elements[n.elements.length - 1] === name) return;
    if (n.elements.length < DEVICES_PER_NODE) n.elements.push(name);
    else n.more++;
  };
  for (let i = 0; i < d.count; i++) {
    for (const k of [d.gate[i], d.source[i], d.drain[i], d.bulk[i]]) add(k, d.names[i]);
  }
  const injects: StructureView["injects"] = [];
  for (let i = 0; i < net.injects.count; i++) {
    add(net.injects.from[i], net.injects.names[i]);
    add(net.injects.to[i], net.injects.names[i]);
    if (injects.length < limit)
      injects.push({
        name: net.injects.names[i],
        from: nodeName(net, net.injects.from[i]),
        to: nodeName(net, net.injects.to[i]),
      });
  }
  const graph =
    d.count <= GRAPH_LIMIT
      ? {
          nodes: net.nodes.names.map((name, k) => ({ name, rail: Number.isFinite(net.nodes.railValue[k]) })),
          devices: Array.from({ length: d.count }, (_, i) => deviceAt(net, i)),
        }
      : null;
  return {
    network: net.name,
    query,
    devices: { total: d.count, matched: devMatched, rows: devRows },
    nodes: { total: nNodes, matched: nodeMatched, rows: [...listed.values()] },
    injects,
    graph,
  };
}

/**
 * Elaborated networks of recent commits (a commit never changes), kept by the pool thread that made them so a
 * search does not elaborate again; small ones only, and few, so a kept thread's memory stays bounded.
 */
const cache = new Map<string, Network>();
const CACHE_ENTRIES = 4;
const CACHE_MAX_DEVICES = 200_000;

/** The structure of a commit's text; a text that does not elaborate answers null (its diagnostics say why). */
export function commitStructure(commitId: string, text: string, query = ""): StructureView | null {
  let net = cache.get(commitId);
  if (!net) {
    const r = elaborate(text);
    if (!r.network) return null;
    net = r.network;
    if (net.devices.count <= CACHE_MAX_DEVICES) {
      cache.set(commitId, net);
      if (cache.size > CACHE_ENTRIES) cache.delete(cache.keys().next().value!);
    }
  }
  return structureOf(net, query);
}
