/**
 * The elaborated `Network` (network.ts), assembled from an elaboration without errors: the tables finished into
 * typed arrays, and each probe and expectation resolved to the nodes, devices, injects and rails it reads.
 */
import type { Elaboration, PendingProbe } from "./context";
import type { PendingExpectation } from "./expectations";
import { evaluateNumber, LayeredScope } from "./expr";
import type { Expectation, Network, Probe, ProbeContext, Settings, Sweep } from "./network";
import { pointScope } from "./point";
import { readName, resolveReads } from "./reads";
import { unitSymbol } from "./units";

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
    expectations: [],
    seeks: cx.seeks.map(({ probeFrom: _f, probeTo: _t, ...s }) => s),
  };
  // a param declared as a bare number takes the unit its sweep's values carry (`sweep vh from 650mV to 850mV …`)
  for (const s of cx.sweeps) {
    const def = net.params.find((p) => p.name === s.param);
    if (def && def.unit == null) def.unit = unitSymbol(s.dim);
  }
  net.probes = cx.probes.map((p) => resolveProbe(p, net));
  net.expectations = cx.expectations.map((x) => resolveExpectation(x, net));
  return net;
}

/** An expectation whose reads are resolved against the network (their names were checked in checks.ts). */
function resolveExpectation(x: PendingExpectation, net: Network): Expectation {
  const reads = resolveReads(net, x.reads);
  const names = x.reads.map((_, i) => readName(i));
  const fns = x.operands;
  const { name, span, line, unit, mixedUnits, condition, check } = x;
  return {
    name,
    span,
    line,
    unit,
    mixedUnits,
    condition,
    check,
    operandCount: fns.length,
    operands(ctx, params, settings, probes, out) {
      const base: Record<string, number> = { ...params, ...probes };
      base.temp = settings.temp;
      base.ut = settings.ut;
      base.kappa = settings.kappa;
      const values: number[] = [];
      reads.fill(ctx, values);
      const scope = new LayeredScope(base, names, values);
      for (let i = 0; i < fns.length; i++) {
        const v = evaluateNumber(fns[i], scope);
        out[i] = Number.isFinite(v) ? v : NaN;
      }
    },
  };
}

/** A probe whose reads are resolved against the network (their names were checked in checks.ts). */
function resolveProbe(p: PendingProbe, net: Network): Probe {
  const reads = resolveReads(net, p.args);
  const names = [...p.loopNames, ...p.args.map((_, i) => readName(i))];
  const { fn, loopValues } = p;
  let lastParams: object | null = null;
  let lastSettings: object | null = null;
  let lastScope: Record<string, number> = {};
  return {
    name: p.name,
    span: p.span,
    unit: unitSymbol(p.dim),
    evaluate(ctx: ProbeContext, params: Readonly<Record<string, number>>, settings: Settings): number {
      if (params !== lastParams || settings !== lastSettings) {
        lastScope = pointScope(net, { ...params, temp: settings.temp });
        lastScope.kappa = settings.kappa;
        lastScope.ut = settings.ut;
        lastParams = params;
        lastSettings = settings;
      }
      const values = loopValues.slice();
      reads.fill(ctx, values);
      return evaluateNumber(fn, new LayeredScope(lastScope, names, values));
    },
  };
}
