/**
 * The run page's Sensitivity view: the adjoint sensitivities and first-order mismatch budget of a run's network
 * at the file's own point (every param at its value, sweeps and mismatch samples left out), from the same core
 * as `runnel sensitivity --json` (src/solver/design-json.ts, docs/language.md "runnel sensitivity and runnel seek").
 * Computed in the interactive pool (a pool thread elaborates and solves; the request thread never does).
 */
import { elaborate } from "@/src/lang/index";
import { seekJson, sensitivityJson, type SeekJson, type SensitivityJson } from "@/src/solver/design-json";
import { pointCount } from "@/src/solver/index";

/** Most devices listed per probe, and most probes answered (the rest are named as left out). */
export const SENSITIVITY_TOP = 20;
export const SENSITIVITY_MAX_PROBES = 64;
/** Largest network the view computes (devices): beyond it the answer says to use the command line. */
export const SENSITIVITY_MAX_DEVICES = 500_000;

export type SensitivityView = SensitivityJson & { probesLeftOut: number };

export function sensitivityView(text: string, top = SENSITIVITY_TOP): SensitivityView {
  const fail = (error: string): SensitivityView => ({
    ok: false,
    network: "",
    method: null,
    error,
    probes: [],
    probesLeftOut: 0,
  });
  const result = elaborate(text);
  const net = result.network;
  if (!net) return fail("the network does not elaborate: see its diagnostics");
  const devices = net.devices.count;
  if (devices > SENSITIVITY_MAX_DEVICES)
    return {
      ...fail(
        `the network has ${devices.toLocaleString("en-US")} devices; this view computes networks of up to ` +
          `${SENSITIVITY_MAX_DEVICES.toLocaleString("en-US")}: use \`runnel sensitivity FILE --json\` for it`,
      ),
      network: net.name,
    };
  const names = net.probes.map((p) => p.name);
  const probes = names.slice(0, SENSITIVITY_MAX_PROBES);
  return { ...sensitivityJson(net, { top, probes }), probesLeftOut: names.length - probes.length };
}

/** The view as CSV: one row per probe and listed device, then the budget's rows. */
export function sensitivityCsv(v: SensitivityView): string {
  const rows = ["probe,kind,name,vt_per_mv,size,budget_share,budget_sigma"];
  const q = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
  const n = (x: number | null | undefined) => (x === null || x === undefined ? "" : String(x));
  for (const p of v.probes) {
    for (const d of p.devices)
      rows.push([q(p.probe), "device", q(d.device), n(d.vt_per_mv), n(d.size), "", ""].join(","));
    for (const d of p.budget?.devices ?? [])
      rows.push([q(p.probe), "budget-device", q(d.name), "", "", n(d.share), n(d.sigma)].join(","));
    for (const g of p.budget?.groups ?? [])
      rows.push([q(p.probe), "budget-group", q(g.pattern), "", "", n(g.share), n(g.sigma)].join(","));
  }
  return rows.join("\n") + "\n";
}

/** Most searches one goal-seek of the view runs (one per point of the network's other sweeps). */
export const SEEK_MAX_SEARCHES = 200;

export interface SeekSpec {
  param: string;
  low: number;
  high: number;
  probe: string;
  target: number;
}

export type SeekView = { ok: true; seeks: SeekJson[] } | { ok: false; error: string; seeks: [] };

/**
 * The goal-seeks of the run page: the file's `seek` statements, or the one `spec` a member asked for, by the
 * core's Brent search (`seekJson`, as `runnel seek --json` gives it), one search per point of the other sweeps.
 */
export function seekView(text: string, spec?: SeekSpec): SeekView {
  const fail = (error: string): SeekView => ({ ok: false, error, seeks: [] });
  const net = elaborate(text).network;
  if (!net) return fail("the network does not elaborate: see its diagnostics");
  if (net.devices.count > SENSITIVITY_MAX_DEVICES)
    return fail(
      `the network has ${net.devices.count.toLocaleString("en-US")} devices; this view seeks on networks of up to ` +
        `${SENSITIVITY_MAX_DEVICES.toLocaleString("en-US")}: use \`runnel seek FILE --json\``,
    );
  const specs = spec
    ? [spec]
    : net.seeks.map((s) => ({ param: s.param, low: s.from, high: s.to, probe: s.probe, target: s.target }));
  for (const s of specs) {
    const searches = pointCount({
      sweeps: net.sweeps.filter((w) => w.param !== s.param),
      mismatch: null,
    });
    if (searches > SEEK_MAX_SEARCHES)
      return fail(
        `seeking ${s.param} takes one search per point of the other sweeps: ${searches.toLocaleString("en-US")}; ` +
          `this view runs up to ${SEEK_MAX_SEARCHES}: use \`runnel seek FILE --json\``,
      );
  }
  return { ok: true, seeks: specs.map((s) => seekJson(net, s)) };
}
