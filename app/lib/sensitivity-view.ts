/**
 * The run page's Sensitivity view: the adjoint sensitivities and first-order mismatch budget of a run's network
 * at the file's own point (every param at its value, sweeps and mismatch samples left out), from the same core
 * as `runnel sensitivity --json` (src/solver/design-json.ts, docs/language.md "runnel sensitivity and runnel seek").
 * Computed in the interactive pool (a pool thread elaborates and solves; the request thread never does).
 */
import { elaborate } from "@/src/lang/index";
import { sensitivityJson, type SensitivityJson } from "@/src/solver/design-json";

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
