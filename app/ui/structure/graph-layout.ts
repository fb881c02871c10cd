/**
 * The node–device graph of a small network laid out by dagre (a layered
 * layout, Sugiyama's method as dagre implements it): devices and internal
 * nodes are vertices; each device has an edge from its source node and one to
 * its drain node (so current flows along the layers), and a dashed edge from
 * a gate on an internal node. Rails are not vertices (a supply would tie every
 * device into one knot): a device lists the rails it touches as tags. Pure.
 */
import dagre from "@dagrejs/dagre";
import type { StructureDevice } from "@/app/lib/structure";

export interface LaidNode {
  id: string;
  kind: "node" | "device";
  name: string;
  x: number;
  y: number;
  width: number;
  height: number;
  /** Device: "nfet" / "pfet". */
  type?: string;
  /** Device: its terminals on rails, as "d vdd", "g gh". */
  railTags?: string[];
}

export interface LaidEdge {
  terminal: "source" | "drain" | "gate" | "bulk";
  points: { x: number; y: number }[];
}

export interface GraphLayout {
  width: number;
  height: number;
  nodes: LaidNode[];
  edges: LaidEdge[];
}

const SHORT = { gate: "g", source: "s", drain: "d", bulk: "b" } as const;

export function layoutGraph(
  graph: { nodes: { name: string; rail: boolean }[]; devices: StructureDevice[] },
  direction: "LR" | "TB" = "LR",
): GraphLayout {
  const rails = new Set(graph.nodes.filter((n) => n.rail).map((n) => n.name));
  const g = new dagre.graphlib.Graph({ multigraph: true });
  g.setGraph({ rankdir: direction, nodesep: 14, ranksep: 28, edgesep: 6, marginx: 12, marginy: 12 });
  g.setDefaultEdgeLabel(() => ({}));
  const used = new Set<string>();
  const tags = new Map<string, string[]>();
  for (const d of graph.devices) {
    const t: string[] = [];
    for (const terminal of ["gate", "source", "drain", "bulk"] as const) {
      const node = d[terminal];
      if (node === "substrate") continue;
      if (rails.has(node)) {
        if (terminal !== "bulk") t.push(`${SHORT[terminal]} ${node}`);
      } else used.add(node);
    }
    tags.set(d.name, t);
    g.setNode(`d:${d.name}`, { width: Math.max(44, 7 * d.name.length + 14), height: t.length ? 34 : 22 });
  }
  for (const name of used) g.setNode(`n:${name}`, { width: 10, height: 10 });
  for (const d of graph.devices) {
    const dev = `d:${d.name}`;
    if (!rails.has(d.source) && d.source !== "substrate")
      g.setEdge(`n:${d.source}`, dev, { terminal: "source" }, `s:${d.name}`);
    if (!rails.has(d.drain) && d.drain !== "substrate")
      g.setEdge(dev, `n:${d.drain}`, { terminal: "drain" }, `d:${d.name}`);
    if (!rails.has(d.gate) && d.gate !== "substrate")
      g.setEdge(`n:${d.gate}`, dev, { terminal: "gate", weight: 0.2 }, `g:${d.name}`);
  }
  dagre.layout(g);
  const types = new Map(graph.devices.map((d) => [d.name, d.type]));
  const nodes: LaidNode[] = g.nodes().map((id) => {
    const n = g.node(id) as { x: number; y: number; width: number; height: number };
    const device = id.startsWith("d:");
    const name = id.slice(2);
    return {
      id,
      kind: device ? "device" : "node",
      name,
      x: n.x,
      y: n.y,
      width: n.width,
      height: n.height,
      ...(device ? { type: types.get(name), railTags: tags.get(name) } : {}),
    };
  });
  const edges: LaidEdge[] = g.edges().map((e) => {
    const label = g.edge(e) as { terminal: LaidEdge["terminal"]; points: { x: number; y: number }[] };
    return { terminal: label.terminal, points: label.points };
  });
  const size = g.graph() as { width?: number; height?: number };
  return { width: size.width ?? 0, height: size.height ?? 0, nodes, edges };
}
