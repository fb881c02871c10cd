/**
 * Which solver a network needs, and why.
 *
 * Linear class (Vittoz & Arreguit 1993; docs/physics.md §3 Pseudo-voltages): model `weak`; every
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
import { pool } from "./pool";

/** Polarity class of an internal node: 0 when none (only gates/injects), n, p, or both. */
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
  const rv = nodes.railValue;
  const isRail = (k: number): boolean => k >= 0 && Number.isFinite(rv[k]);
  const reasons: string[] = [];
  const add = (r: () => string): void => {
    if (reasons.length < MAX_REASONS) reasons.push(r());
  };
  if (net.settings.model === "ekv")
    add(() => "the all-region EKV model (set model = ekv) is not linear in pseudo-voltages");
  const { gate, source, drain, bulk, type } = devices;
  const nodeClass = new Uint8Array(nn);
  const firstOff = channelClasses(devices.count, type, gate, bulk, source, drain, rv, nodeClass);
  // Gates and bulks off the rails (the names only for the first few: a large Newton network has millions).
  for (let d = firstOff; d >= 0 && d < devices.count && reasons.length < MAX_REASONS; d++) {
    if (!isRail(gate[d])) add(() => `gate of ${devices.names[d]} is on internal node ${nodes.names[gate[d]]}`);
    const b = bulk[d];
    if (b >= 0 && !isRail(b))
      add(() => `${type[d] === NFET ? "bulk" : "well"} of ${devices.names[d]} is on internal node ${nodes.names[b]}`);
  }
  let mixed = false;
  for (let k = 0; k < nn && !mixed; k++) if (nodeClass[k] === CLASS_MIXED && !isRail(k)) mixed = true;
  if (mixed) {
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
      add(
        () =>
          `node ${nodes.names[k]} joins n-channel ${devices.names[firstN[k]]} and p-channel ${devices.names[firstP[k]]}`,
      );
    }
  }
  const problems = structuralProblems(net);
  const linear = reasons.length === 0;
  const reason = linear
    ? "every gate and bulk is on a rail and every internal node touches one channel type: linear in pseudo-voltages"
    : reasons[0];
  return { linear, reason, reasons: linear ? [reason] : reasons, nodeClass, problems };
}

/**
 * The channel types touching each node (nodeClass), in one pass; returns the
 * first device whose gate or bulk/well is not a rail, or −1. A rail's value is
 * finite, an internal node's NaN (x − x is 0 only for a finite x).
 */
function channelClasses(
  m: number,
  type: Uint8Array,
  gate: Int32Array,
  bulk: Int32Array,
  source: Int32Array,
  drain: Int32Array,
  rv: Float64Array,
  nodeClass: Uint8Array,
): number {
  let firstOff = -1;
  for (let d = 0; d < m; d++) {
    const bit = type[d] === NFET ? CLASS_N : CLASS_P;
    nodeClass[source[d]] |= bit;
    nodeClass[drain[d]] |= bit;
    if (firstOff < 0) {
      const vg = rv[gate[d]];
      const b = bulk[d];
      if (vg - vg !== 0 || (b >= 0 && rv[b] - rv[b] !== 0)) firstOff = d;
    }
  }
  return firstOff;
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
  const parent = pool.takeI32(nn);
  for (let k = 0; k < nn; k++) parent[k] = k;
  const channels = pool.zerosI32(nn);
  unionChannels(devices.count, devices.source, devices.drain, parent, channels);
  const rv = nodes.railValue;
  const hasRail = pool.zerosU8(nn);
  for (let k = 0; k < nn; k++) if (Number.isFinite(rv[k])) hasRail[find(parent, k)] = 1;
  const out: { node: number; message: string }[] = [];
  const reported = pool.zerosU8(nn);
  for (let k = 0; k < nn && out.length < MAX_REASONS; k++) {
    if (Number.isFinite(rv[k])) continue;
    if (channels[k] === 0) {
      out.push({
        node: k,
        message: `node ${nodes.names[k]} connects to no device channel (source or drain), so its voltage is undetermined`,
      });
      continue;
    }
    const root = find(parent, k);
    if (!hasRail[root] && !reported[root]) {
      reported[root] = 1;
      out.push({
        node: k,
        message: `node ${nodes.names[k]} and the nodes joined to it by channels have no channel path to a rail (floating)`,
      });
    }
  }
  pool.give(parent, channels, hasRail, reported);
  return out;
}

/** Union of the two ends of every channel (path halving), and each node's channel count. */
function unionChannels(
  m: number,
  source: Int32Array,
  drain: Int32Array,
  parent: Int32Array,
  channels: Int32Array,
): void {
  for (let d = 0; d < m; d++) {
    const s = source[d];
    const t = drain[d];
    if (s === t) continue;
    channels[s]++;
    channels[t]++;
    const a = find(parent, s);
    const b = find(parent, t);
    if (a !== b) parent[a] = b;
  }
}
