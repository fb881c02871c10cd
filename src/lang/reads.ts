/**
 * What probes and expectations read from a solved point: one value per `voltage(node)`, `current(element)` or
 * `power(rails…)` call. A call compiles to a placeholder variable (`readName(i)`) of the expression; its names are
 * checked against the finished tables (checks.ts) and resolved to node, device, inject and rail indices when the
 * network is assembled.
 *
 * `power()` is the power drawn from the rails: the sum over rails of the rail's voltage times the current it
 * delivers into the network (a rail that sinks current counts negative); `power(vdd, vbias)` sums those rails only.
 */
import type { CallExpr } from "./expr";
import type { Compiler, NameTpl } from "./compile";
import type { Elaboration } from "./context";
import type { Network, ProbeContext } from "./network";
import { suggest } from "./suggest";
import { AMPERE, type Dim, mulDim, VOLT } from "./units";

/** A read as compiled: its names may still have `{…}` pieces. */
export type ReadTpl = { kind: "voltage" | "current"; name: NameTpl } | { kind: "power"; rails: NameTpl[] };

/** A name as written, with where. */
export interface NamedAt {
  name: string;
  from: number;
  to: number;
}

/** A read with its names made, not yet checked against the finished tables. */
export type PendingRead =
  | { kind: "voltage" | "current"; name: string; from: number; to: number }
  | { kind: "power"; rails: NamedAt[]; from: number; to: number };

/** The variable that stands for the i-th read of a compiled expression. */
export function readName(i: number): string {
  return `__runnel_arg${i}`;
}

/** Most names offered to "did you mean" from a table; a larger table offers none. */
const SUGGEST_FROM = 5000;

const POWER: Dim = mulDim(VOLT, AMPERE, 1);

/**
 * The dimension of a read call in an expression compiled inside loops over `loopVars`; the read goes to `reads`
 * and its placeholder to `calls`. Null after reporting a malformed call.
 */
export function readCall(
  compiler: Compiler,
  cx: Elaboration,
  c: CallExpr,
  loopVars: string[],
  reads: ReadTpl[],
  calls: Map<CallExpr, string>,
): Dim | null {
  const { sink } = cx;
  const names: NameTpl[] = [];
  for (const a of c.args) {
    if (a.k !== "name" && a.k !== "interp") {
      sink.error(
        a.from,
        a.to,
        `${c.fn}() takes ${c.fn === "power" ? "rail names" : "a name"}, not an expression`,
        c.fn === "voltage" ? "for example voltage(x3)" : c.fn === "current" ? "for example current(m1)" : "power(vdd)",
      );
      return null;
    }
    const t = compiler.nameOf(a, loopVars);
    if (!t) return null;
    names.push(t);
  }
  if (c.fn === "power") {
    calls.set(c, readName(reads.length));
    reads.push({ kind: "power", rails: names });
    return POWER;
  }
  const kind = c.fn as "voltage" | "current";
  if (names.length !== 1) {
    sink.error(c.fnFrom, c.fnTo, `${kind}() takes one ${kind === "voltage" ? "node" : "device, inject or rail"} name`);
    return null;
  }
  calls.set(c, readName(reads.length));
  reads.push({ kind, name: names[0] });
  return kind === "voltage" ? VOLT : AMPERE;
}

/** Reports every read whose names do not name what it reads (silent for names of statements with errors). */
export function checkReads(cx: Elaboration, reads: readonly PendingRead[]): void {
  const { sink, namespace, nodes, devices, injects } = cx;
  for (const a of reads) {
    if (a.kind === "power") {
      for (const r of a.rails) {
        if (namespace.broken.has(r.name)) continue;
        const node = nodes.names.find(r.name);
        if (node !== undefined && nodes.isRail.data[node]) continue;
        sink.error(
          r.from,
          r.to,
          node !== undefined
            ? `power() sums rails, but '${r.name}' is an internal node`
            : `power() of unknown rail '${r.name}'`,
          suggest(
            r.name,
            nodes.rails.map((x) => x.name),
          ) ?? "power() with no names sums every rail",
        );
      }
      continue;
    }
    if (namespace.broken.has(a.name)) continue;
    if (a.kind === "voltage") {
      if (nodes.names.find(a.name) !== undefined) continue;
      const isDev = devices.names.has(a.name);
      const hint =
        isDev || injects.index.has(a.name)
          ? `'${a.name}' is a ${isDev ? "device" : "inject"}: use current(${a.name})`
          : suggest(a.name, nodes.length < SUGGEST_FROM ? nodes.names.names.all() : []);
      sink.error(a.from, a.to, `voltage() of unknown node '${a.name}'`, hint);
    } else {
      if (devices.names.has(a.name) || injects.index.has(a.name)) continue;
      const node = nodes.names.find(a.name);
      if (node !== undefined && nodes.isRail.data[node]) continue;
      if (node !== undefined) {
        sink.error(
          a.from,
          a.to,
          `current() needs a device, an inject or a rail, but '${a.name}' is an internal node`,
          `to read its voltage use voltage(${a.name})`,
        );
        continue;
      }
      const candidates =
        devices.length < SUGGEST_FROM
          ? [...devices.names.names.all(), ...injects.names, ...nodes.rails.map((r) => r.name)]
          : [];
      sink.error(a.from, a.to, `current() of unknown device, inject or rail '${a.name}'`, suggest(a.name, candidates));
    }
  }
}

/** What a resolved read takes from a point. */
const Reads = { Voltage: 0, Device: 1, Inject: 2, Rail: 3, Power: 4 } as const;

/** Reads resolved against the network: `fill` writes their values at a point, in order, from `at` in `out`. */
export interface ResolvedReads {
  count: number;
  fill(ctx: ProbeContext, out: number[]): void;
}

/** Resolves reads whose names checkReads accepted. */
export function resolveReads(net: Network, reads: readonly PendingRead[]): ResolvedReads {
  const kinds = new Int8Array(reads.length);
  const index = new Int32Array(reads.length);
  const powerRails: Int32Array[] = [];
  reads.forEach((a, i) => {
    if (a.kind === "power") {
      kinds[i] = Reads.Power;
      index[i] = powerRails.length;
      powerRails.push(
        Int32Array.from(
          a.rails.length ? a.rails.map((r) => net.nodes.index.get(r.name)!) : net.rails.map((r) => r.node),
        ),
      );
    } else if (a.kind === "voltage") {
      kinds[i] = Reads.Voltage;
      index[i] = net.nodes.index.get(a.name)!;
    } else if (net.devices.index.has(a.name)) {
      kinds[i] = Reads.Device;
      index[i] = net.devices.index.get(a.name)!;
    } else if (net.injects.index.has(a.name)) {
      kinds[i] = Reads.Inject;
      index[i] = net.injects.index.get(a.name)!;
    } else {
      kinds[i] = Reads.Rail;
      index[i] = net.nodes.index.get(a.name)!;
    }
  });
  return {
    count: reads.length,
    fill(ctx, out) {
      for (let i = 0; i < kinds.length; i++) {
        const j = index[i];
        switch (kinds[i]) {
          case Reads.Voltage:
            out.push(ctx.voltage(j));
            break;
          case Reads.Device:
            out.push(ctx.deviceCurrent(j));
            break;
          case Reads.Inject:
            out.push(ctx.injectCurrent(j));
            break;
          case Reads.Rail:
            out.push(ctx.railCurrent(j));
            break;
          default: {
            let p = 0;
            for (const r of powerRails[j]) p += ctx.voltage(r) * ctx.railCurrent(r);
            out.push(p);
          }
        }
      }
    },
  };
}
