import type { Network, Settings } from "./network";

/** Boltzmann constant, J/K (exact since the 2019 SI revision; BIPM SI Brochure, 9th ed., 2019). */
export const BOLTZMANN = 1.380649e-23;
/** Elementary charge, C (exact since the 2019 SI revision; BIPM SI Brochure, 9th ed., 2019). */
export const ELEMENTARY_CHARGE = 1.602176634e-19;

/** Thermal voltage U_T = k·T/q in volts. */
export function thermalVoltage(temp: number): number {
  return (BOLTZMANN * temp) / ELEMENTARY_CHARGE;
}

/** The full scope of a point: every param, plus temp, ut and kappa. */
export function pointScope(net: Network, overrides: Readonly<Record<string, number>> = {}): Record<string, number> {
  const scope: Record<string, number> = {};
  for (const p of net.params) scope[p.name] = p.value;
  for (const [k, v] of Object.entries(overrides)) if (k !== "temp") scope[k] = v;
  const temp = overrides.temp ?? net.settings.temp;
  scope.temp = temp;
  scope.ut = thermalVoltage(temp);
  scope.kappa = net.settings.kappa;
  return scope;
}

/**
 * The network at one sweep point: params (and `temp`) overridden, every binding
 * that depends on a changed name re-evaluated. Tables that do not change are
 * shared with `net`, tables that change are copied, so `net` is never mutated.
 * Params that are not overridden keep their default values.
 */
export function applyPoint(net: Network, overrides: Readonly<Record<string, number>>): Network {
  const changed = new Set<string>();
  for (const p of net.params) if (p.name in overrides && overrides[p.name] !== p.value) changed.add(p.name);
  const settings: Settings = { ...net.settings };
  if ("temp" in overrides && overrides.temp !== net.settings.temp) {
    settings.temp = overrides.temp;
    settings.ut = thermalVoltage(overrides.temp);
    changed.add("temp");
    changed.add("ut");
  }
  if (changed.size === 0) return net;

  const scope = pointScope(net, overrides);
  // Settings first: other bindings may read kappa.
  const affected = net.bindings.filter((b) => b.dependsOn.some((d) => changed.has(d)));
  for (const b of affected) {
    if (b.target.kind !== "setting") continue;
    const v = b.evaluate(scope);
    (settings as unknown as Record<string, number>)[b.target.name] = v;
    if (b.target.name === "kappa") {
      scope.kappa = v;
      changed.add("kappa");
    }
  }
  const all = changed.has("kappa") ? net.bindings.filter((b) => b.dependsOn.some((d) => changed.has(d))) : affected;

  let railValue = net.nodes.railValue;
  let injectValue = net.injects.value;
  let w = net.devices.w;
  let l = net.devices.l;
  for (const b of all) {
    const t = b.target;
    switch (t.kind) {
      case "rail":
        if (railValue === net.nodes.railValue) railValue = Float64Array.from(railValue);
        railValue[t.node] = b.evaluate(scope);
        break;
      case "inject":
        if (injectValue === net.injects.value) injectValue = Float64Array.from(injectValue);
        injectValue[t.index] = b.evaluate(scope);
        break;
      case "w":
        if (w === net.devices.w) w = Float64Array.from(w);
        w[t.index] = b.evaluate(scope);
        break;
      case "l":
        if (l === net.devices.l) l = Float64Array.from(l);
        l[t.index] = b.evaluate(scope);
        break;
      case "setting":
        break;
    }
  }
  return {
    ...net,
    settings,
    params: net.params.map((p) => (p.name in overrides ? { ...p, value: overrides[p.name] } : p)),
    nodes: railValue === net.nodes.railValue ? net.nodes : { ...net.nodes, railValue },
    injects: injectValue === net.injects.value ? net.injects : { ...net.injects, value: injectValue },
    devices: w === net.devices.w && l === net.devices.l ? net.devices : { ...net.devices, w, l },
  };
}
