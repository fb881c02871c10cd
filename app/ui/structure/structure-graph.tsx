"use client";

/**
 * The drawing of a small network: devices as rounded boxes (moss for nfet,
 * tide for pfet) with their rail terminals as tags, internal nodes as dots
 * with their names, source and drain edges solid and gate edges dashed. Our
 * own look: no circuit symbols. Clicking a node or device searches the
 * tables for it (onPick). Fits the width, or scrolls at 1:1 when too wide.
 */
import { useMemo, useState } from "react";
import { downloadText } from "@/app/ui/plots/download";
import type { StructureView } from "@/app/lib/structure";
import { layoutGraph } from "./graph-layout";

export interface StructureGraphProps {
  graph: NonNullable<StructureView["graph"]>;
  /** A node or device name to highlight (the search). */
  highlight: string;
  onPick(name: string): void;
  title: string;
}

const line = (pts: { x: number; y: number }[]) =>
  pts.map((p, i) => `${i ? "L" : "M"}${p.x.toFixed(1)} ${p.y.toFixed(1)}`).join(" ");

export function StructureGraph({ graph, highlight, onPick, title }: StructureGraphProps) {
  const layout = useMemo(() => layoutGraph(graph), [graph]);
  // A long chain is wider than any screen: shown at 1:1 with a scroll bar rather than shrunk past reading.
  const [fitChoice, setFit] = useState<boolean | null>(null);
  const fit = fitChoice ?? layout.width <= 1600;
  const h = highlight.trim().toLowerCase();
  const hit = (name: string) => h !== "" && name.toLowerCase().includes(h);
  const svg = (
    <svg
      xmlns="http://www.w3.org/2000/svg"
      viewBox={`0 0 ${layout.width} ${layout.height}`}
      width={fit ? "100%" : layout.width}
      height={fit ? undefined : layout.height}
      role="img"
      aria-label={title}
      data-slot="structure-graph"
      className="block"
      fontFamily="var(--font-mono), monospace"
      fontSize="10"
    >
      <g fill="none" strokeWidth="1.2">
        {layout.edges.map((e, i) => (
          <path
            key={i}
            d={line(e.points)}
            stroke={e.terminal === "gate" ? "var(--color-ochre-700)" : "var(--color-stone-500)"}
            strokeDasharray={e.terminal === "gate" ? "4 3" : undefined}
            opacity={e.terminal === "gate" ? 0.7 : 1}
          />
        ))}
      </g>
      {layout.nodes.map((n) =>
        n.kind === "node" ? (
          <g key={n.id} onClick={() => onPick(n.name)} className="cursor-pointer" data-node={n.name}>
            <circle
              cx={n.x}
              cy={n.y}
              r={hit(n.name) ? 6 : 4}
              fill={hit(n.name) ? "var(--color-ember-500)" : "var(--color-stone-ink)"}
            />
            <text x={n.x} y={n.y - 7} textAnchor="middle" fill="var(--color-stone-600)">
              {n.name}
            </text>
          </g>
        ) : (
          <g key={n.id} onClick={() => onPick(n.name)} className="cursor-pointer" data-device={n.name}>
            <rect
              x={n.x - n.width / 2}
              y={n.y - n.height / 2}
              width={n.width}
              height={n.height}
              rx="6"
              fill={n.type === "pfet" ? "var(--color-stone-50)" : "var(--color-moss-50)"}
              stroke={
                hit(n.name)
                  ? "var(--color-ember-500)"
                  : n.type === "pfet"
                    ? "var(--color-tide-600)"
                    : "var(--color-moss-600)"
              }
              strokeWidth={hit(n.name) ? 2 : 1.2}
            />
            <text x={n.x} y={n.y + (n.railTags?.length ? -3 : 3.5)} textAnchor="middle" fill="var(--color-stone-ink)">
              {n.name}
            </text>
            {n.railTags?.length ? (
              <text x={n.x} y={n.y + 10} textAnchor="middle" fontSize="8" fill="var(--color-stone-500)">
                {n.railTags.join(" · ")}
              </text>
            ) : null}
          </g>
        ),
      )}
    </svg>
  );
  return (
    <figure className="space-y-1">
      <div className="flex flex-wrap items-center gap-3 text-xs text-stone-600">
        <span>
          <span className="inline-block h-2.5 w-4 rounded-sm border border-moss-600 bg-moss-50 align-middle" /> nfet
        </span>
        <span>
          <span className="inline-block h-2.5 w-4 rounded-sm border border-tide-600 bg-stone-50 align-middle" /> pfet
        </span>
        <span>● node</span>
        <span>— source / drain</span>
        <span className="text-ochre-700">- - gate</span>
        <span>rails as tags (d vdd: drain on vdd)</span>
        <label className="ml-auto flex items-center gap-1">
          <input type="checkbox" checked={fit} onChange={(e) => setFit(e.target.checked)} /> fit the width
        </label>
        <button
          type="button"
          className="rounded border border-stone-300 bg-white px-2 py-0.5 hover:border-moss-500"
          onClick={(e) => {
            const el = (e.currentTarget.closest("figure") as HTMLElement).querySelector("svg")!;
            const text = el.outerHTML.replace(/var\(--color-([a-z0-9-]+)\)/g, (_m, name: string) =>
              getComputedStyle(document.documentElement).getPropertyValue(`--color-${name}`).trim(),
            );
            downloadText(`${title.replace(/[^a-z0-9]+/gi, "-").toLowerCase()}.svg`, "image/svg+xml", text);
          }}
        >
          SVG
        </button>
      </div>
      <div className="max-h-[70vh] overflow-auto rounded border border-stone-200 bg-white">{svg}</div>
    </figure>
  );
}
