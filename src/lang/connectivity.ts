/**
 * Structural checks on an elaborated network, linear in its size:
 * union-find over device channels (source–drain) for DC paths to rails, and a
 * count of terminals per node.
 */

export interface ConnectivityInput {
  nodeCount: number;
  /** 1 for a rail. */
  isRail: Uint8Array;
  deviceCount: number;
  gate: Int32Array;
  source: Int32Array;
  drain: Int32Array;
  /** Node index or -1 (the implicit substrate). */
  bulk: Int32Array;
  injectCount: number;
  injectFrom: Int32Array;
  injectTo: Int32Array;
}

export interface ConnectivityResult {
  /** Internal nodes whose channel-connected component holds no rail. */
  floating: number[];
  /** Internal nodes touched by exactly one terminal (gate, source, drain, bulk or inject end). */
  single: number[];
  /** Rails touched by no terminal. */
  unusedRails: number[];
}

function find(parent: Int32Array, x: number): number {
  while (parent[x] !== x) {
    parent[x] = parent[parent[x]];
    x = parent[x];
  }
  return x;
}

export function checkConnectivity(n: ConnectivityInput): ConnectivityResult {
  const parent = new Int32Array(n.nodeCount);
  for (let i = 0; i < n.nodeCount; i++) parent[i] = i;
  const touches = new Int32Array(n.nodeCount);
  for (let d = 0; d < n.deviceCount; d++) {
    const s = n.source[d];
    const t = n.drain[d];
    touches[n.gate[d]]++;
    touches[s]++;
    touches[t]++;
    if (n.bulk[d] >= 0) touches[n.bulk[d]]++;
    const a = find(parent, s);
    const b = find(parent, t);
    if (a !== b) parent[a] = b;
  }
  for (let j = 0; j < n.injectCount; j++) {
    touches[n.injectFrom[j]]++;
    touches[n.injectTo[j]]++;
  }
  const railRoot = new Uint8Array(n.nodeCount);
  for (let i = 0; i < n.nodeCount; i++) if (n.isRail[i]) railRoot[find(parent, i)] = 1;
  const out: ConnectivityResult = { floating: [], single: [], unusedRails: [] };
  for (let i = 0; i < n.nodeCount; i++) {
    if (n.isRail[i]) {
      if (touches[i] === 0) out.unusedRails.push(i);
      continue;
    }
    if (!railRoot[find(parent, i)]) out.floating.push(i);
    if (touches[i] === 1) out.single.push(i);
  }
  return out;
}
