/**
 * The elaborated `Network` (network.ts), assembled from an elaboration without errors: the tables finished into
 * typed arrays, and each probe resolved to the nodes, devices, injects and rails it reads.
 */
import type { Elaboration, PendingProbe } from "./context";
import { evaluateNumber, LayeredScope } from "./expr";
import type { Network, Probe, ProbeContext, Settings, Sweep } from "./network";
import { pointScope } from "./point";
import { probeArgName } from "./templates";

export function assembleNetwork(cx: Elaboration): Network {
  const net: Network = {
    name: cx.name,
    settings: { ...cx.values.settings },
    params: cx.values.paramList,
    nodes: cx.nodes.finish(),
    rails: cx.nodes.rails,
    devices: cx.devices.finish(),
    injects: cx.injects.finish(),
    probes: [],
    sweeps: cx.sweeps.map((s): Sweep => ({ param: s.param, values: s.values, log: s.log, span: s.span })),
    mismatch: cx.mismatch,
    bindings: cx.values.bindings,
  };
  net.probes = cx.probes.map((p) => resolveProbe(p, net));
  return net;
}

/** What a probe argument reads. */
const Reads = { Voltage: 0, Device: 1, Inject: 2, Rail: 3 } as const;

/** A probe whose arguments are resolved against the network (their names were checked in checks.ts). */
function resolveProbe(p: PendingProbe, net: Network): Probe {
  const kinds = new Int8Array(p.args.length);
  const index = new Int32Array(p.args.length);
  p.args.forEach((a, i) => {
    if (a.kind === "voltage") {
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
  const names = [...p.loopNames, ...p.args.map((_, i) => probeArgName(i))];
  const { fn, loopValues } = p;
  let lastParams: object | null = null;
  let lastSettings: object | null = null;
  let lastScope: Record<string, number> = {};
  return {
    name: p.name,
    span: p.span,
    evaluate(ctx: ProbeContext, params: Readonly<Record<string, number>>, settings: Settings): number {
      if (params !== lastParams || settings !== lastSettings) {
        lastScope = pointScope(net, { ...params, temp: settings.temp });
        lastScope.kappa = settings.kappa;
        lastScope.ut = settings.ut;
        lastParams = params;
        lastSettings = settings;
      }
      const values = loopValues.slice();
      for (let i = 0; i < kinds.length; i++) {
        const j = index[i];
        values.push(
          kinds[i] === Reads.Voltage
            ? ctx.voltage(j)
            : kinds[i] === Reads.Device
              ? ctx.deviceCurrent(j)
              : kinds[i] === Reads.Inject
                ? ctx.injectCurrent(j)
                : ctx.railCurrent(j),
        );
      }
      return evaluateNumber(fn, new LayeredScope(lastScope, names, values));
    },
  };
}
