/**
 * Which solver a network needs, and why.
 *
 * Linear class (Vittoz & Arreguit 1993; PHYSICS.md §3): model `weak`; every
 * gate and every bulk/well on a rail; every internal node touches channels of
 * one polarity only (plus ideal current sources). Then KCL is a weighted
 * Laplacian in pseudo-voltages. Anything else goes to Newton, with the first
 * violation as the reason.
 *
 * Independently of the class, a network is unsolvable when an internal node
 * has no channel, or a channel-connected group of internal nodes reaches no
 * rail: those are `problems`, reported as errors by the solver.
 */

import { type Network, NFET } from "../lang/network";

/** Polarity class of an internal node: none (only gates/injects), n, p, or both. */
export const CLASS_NONE = 0;
export const CLASS_N = 1;
export const CLASS_P = 2;
export const CLASS_MIXED = 3;

export interface Classification {
  linear: boolean;
  /** Why the network is (or is not) in the linear class; names the node or device that breaks it. */
  reason: string;
  /** Every violation found (at most 20), the first being `reason`. */
  reasons: string[];
  /** Per node: CLASS_* bit set of the channel types touching it (rails too). */
  nodeClass: Uint8Array;
  /** Structural errors that make any solve impossible, each naming a node. */
  problems: { node: number; message: string }[];
}

const MAX_REASONS = 20;

export function classify(net: Network): Classification {
  const { nodes, devices } = net;
  const nn = nodes.names.length;
  const isRail = (k: number): boolean => k >= 0 && Number.isFinite(nodes.railValue[k]);
  const nodeClass = new Uint8Array(nn);
  const reasons: string[] = [];
  const add = (r: string): void => {
    if (reasons.length < MAX_REASONS) reasons.push(r);
  };
  if (net.settings.model === "ekv") add("the all-region EKV model (set model = ekv) is not linear in pseudo-voltages");
  const { gate, source, drain, bulk, type } = devices;
  for (let d = 0; d < devices.count; d++) {
    const bit = type[d] === NFET ? CLASS_N : CLASS_P;
    nodeClass[source[d]] |= bit;
    nodeClass[drain[d]] |= bit;
    if (!isRail(gate[d])) add(`gate of ${devices.names[d]} is on internal node ${nodes.names[gate[d]]}`);
    const b = bulk[d];
    if (b >= 0 && !isRail(b)) add(`${type[d] === NFET ? "bulk" : "well"} of ${devices.names[d]} is on internal node ${nodes.names[b]}`);
  }
  // First n- and p-channel device on each node, to name both sides of a mixed node.
  const firstN = new Int32Array(nn).fill(-1);
  const firstP = new Int32Array(nn).fill(-1);
  for (let d = 0; d < devices.count; d++) {
    const first = type[d] === NFET ? firstN : firstP;
    if (first[source[d]] < 0) first[source[d]] = d;
    if (first[drain[d]] < 0) first[drain[d]] = d;
  }
  for (let k = 0; k < nn; k++) {
    if (isRail(k) || nodeClass[k] !== CLASS_MIXED) continue;
    add(`node ${nodes.names[k]} joins n-channel ${devices.names[firstN[k]]} and p-channel ${devices.names[firstP[k]]}`);
  }
  const problems = structuralProblems(net);
  const linear = reasons.length === 0;
  const reason = linear
    ? "every gate and bulk is on a rail and every internal node touches one channel type: linear in pseudo-voltages"
    : reasons[0];
  return { linear, reason, reasons: linear ? [reason] : reasons, nodeClass, problems };
}

function find(parent: Int32Array, x: number): number {
  while (parent[x] !== x) {
    parent[x] = parent[parent[x]];
    x = parent[x];
  }
  return x;
}

/** Internal nodes without a channel, and channel-connected groups of internal nodes with no rail. */
function structuralProblems(net: Network): { node: number; message: string }[] {
  const { nodes, devices } = net;
  const nn = nodes.names.length;
  const parent = new Int32Array(nn);
  for (let k = 0; k < nn; k++) parent[k] = k;
  const channels = new Int32Array(nn);
  const { source, drain } = devices;
  for (let d = 0; d < devices.count; d++) {
    const s = source[d];
    const t = drain[d];
    if (s === t) continue;
    channels[s]++;
    channels[t]++;
    const a = find(parent, s);
    const b = find(parent, t);
    if (a !== b) parent[a] = b;
  }
  const hasRail = new Uint8Array(nn);
  for (let k = 0; k < nn; k++) if (Number.isFinite(nodes.railValue[k])) hasRail[find(parent, k)] = 1;
  const out: { node: number; message: string }[] = [];
  const reported = new Uint8Array(nn);
  for (let k = 0; k < nn && out.length < MAX_REASONS; k++) {
    if (Number.isFinite(nodes.railValue[k])) continue;
    const name = nodes.names[k];
    if (channels[k] === 0) {
      out.push({ node: k, message: `node ${name} connects to no device channel (source or drain), so its voltage is undetermined` });
      continue;
    }
    const root = find(parent, k);
    if (!hasRail[root] && !reported[root]) {
      reported[root] = 1;
      out.push({ node: k, message: `node ${name} and the nodes joined to it by channels have no channel path to a rail (floating)` });
    }
  }
  return out;
}
