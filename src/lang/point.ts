import type { Network, Settings } from "./network";

/** Boltzmann constant, J/K (exact since the 2019 SI revision; BIPM SI Brochure, 9th ed., 2019). */
export const BOLTZMANN = 1.380649e-23;
/** Elementary charge, C (exact since the 2019 SI revision; BIPM SI Brochure, 9th ed., 2019). */
export const ELEMENTARY_CHARGE = 1.602176634e-19;

/** Thermal voltage U_T = k·T/q in volts. */
export function thermalVoltage(temp: number): number {
  return (BOLTZMANN * temp) / ELEMENTARY_CHARGE;
}

/**
 * The full scope of a point: every param, plus temp, ut and kappa.
 * Params not in `overrides` are re-evaluated in their statement order, so a
 * param derived from a swept one (`param b = 2*a`, sweep of `a`) follows it.
 * kappa is re-evaluated (when `set kappa` depends on a param) before the first
 * param that uses it; the language guarantees its own inputs come earlier.
 */
export function pointScope(net: Network, overrides: Readonly<Record<string, number>> = {}): Record<string, number> {
  const scope: Record<string, number> = {};
  const temp = overrides.temp ?? net.settings.temp;
  scope.temp = temp;
  scope.ut = thermalVoltage(temp);
  scope.kappa = net.settings.kappa;
  const kappaBinding = net.bindings.find((b) => b.target.kind === "setting" && b.target.name === "kappa");
  let kappaDone = kappaBinding === undefined;
  for (const p of net.params) {
    if (!kappaDone && kappaBinding && p.dependsOn?.includes("kappa")) {
      scope.kappa = kappaBinding.evaluate(scope);
      kappaDone = true;
    }
    if (Object.prototype.hasOwnProperty.call(overrides, p.name)) scope[p.name] = overrides[p.name];
    else scope[p.name] = p.evaluate ? p.evaluate(scope) : p.value;
  }
  if (!kappaDone && kappaBinding) scope.kappa = kappaBinding.evaluate(scope);
  return scope;
}

/**
 * The network at one sweep point: params (and `temp`) overridden, every binding
 * that depends on a changed name re-evaluated. Tables that do not change are
 * shared with `net`, tables that change are copied, so `net` is never mutated.
 * Params that are not overridden keep their default values, or follow the
 * params they are derived from.
 */
export function applyPoint(net: Network, overrides: Readonly<Record<string, number>>): Network {
  const scope = pointScope(net, overrides);
  const changed = new Set<string>();
  for (const p of net.params) if (scope[p.name] !== p.value) changed.add(p.name);
  if (scope.temp !== net.settings.temp) {
    changed.add("temp");
    changed.add("ut");
  }
  if (scope.kappa !== net.settings.kappa) changed.add("kappa");
  if (changed.size === 0) return net;

  const settings: Settings = { ...net.settings, temp: scope.temp, ut: scope.ut, kappa: scope.kappa };
  const affected = net.bindings.filter((b) => b.dependsOn.some((d) => changed.has(d)));

  // The value arrays a binding may change, copied on first change (the network's own are never written).
  const arrays = { rail: net.nodes.railValue, inject: net.injects.value, w: net.devices.w, l: net.devices.l };
  const copied = new Set<keyof typeof arrays>();
  for (const b of affected) {
    const t = b.target;
    if (t.kind === "setting") {
      // kappa is already in `scope` (pointScope evaluated it in statement order).
      if (t.name !== "kappa") settings[t.name] = b.evaluate(scope);
      continue;
    }
    if (!copied.has(t.kind)) {
      arrays[t.kind] = Float64Array.from(arrays[t.kind]);
      copied.add(t.kind);
    }
    arrays[t.kind][t.kind === "rail" ? t.node : t.index] = b.evaluate(scope);
  }
  const { rail: railValue, inject: injectValue, w, l } = arrays;
  return {
    ...net,
    settings,
    params: net.params.map((p) => (scope[p.name] !== p.value ? { ...p, value: scope[p.name] } : p)),
    nodes: copied.has("rail") ? { ...net.nodes, railValue } : net.nodes,
    injects: copied.has("inject") ? { ...net.injects, value: injectValue } : net.injects,
    devices: copied.has("w") || copied.has("l") ? { ...net.devices, w, l } : net.devices,
  };
}
