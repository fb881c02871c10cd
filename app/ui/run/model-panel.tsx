/** The run's model (device equations and constants) and how it was solved, with its validity notes. */
import { useFormat } from "@/app/ui/notation";
import type { RunRow } from "@/app/lib/runs";
import { Validity } from "./validity";

export function ModelPanel({ run, swept }: { run: RunRow; swept: string[] }) {
  const fmt = useFormat();
  const m = run.model as {
    model?: string;
    kappa?: number;
    temp?: number;
    ut?: number;
    i0?: number;
    vt0?: number | null;
    ispec?: number | null;
    devices?: number;
    nodes?: number;
  } | null;
  const method = run.newtonPoints
    ? "damped Newton"
    : run.solverReason
      ? "one sparse symmetric solve per point (pseudo-voltages)"
      : "—";
  return (
    <section
      aria-label="Model and solver"
      className="grid gap-4 rounded border border-stone-200 bg-white p-4 md:grid-cols-2"
    >
      <div className="space-y-1 text-sm">
        <h2 className="font-medium">Model</h2>
        {m ? (
          <dl className="tabular grid grid-cols-[10rem_1fr] gap-x-3 gap-y-0.5">
            <dt className="text-stone-500">device model</dt>
            <dd>{m.model === "ekv" ? "all-region EKV interpolation" : "weak-inversion exponential"}</dd>
            <dt className="text-stone-500">slope factor κ</dt>
            <dd>{fmt(m.kappa, "")}</dd>
            <dt className="text-stone-500">temperature</dt>
            <dd>
              {swept.includes("temp") ? "swept (see each point); otherwise " : ""}
              {fmt(m.temp, "K")} (U<sub>T</sub> = {fmt(m.ut, "V")})
            </dd>
            <dt className="text-stone-500">I₀ (W/L = 1)</dt>
            <dd>{fmt(m.i0, "A")}</dd>
            <dt className="text-stone-500">
              V<sub>T0</sub>, I<sub>spec</sub>
            </dt>
            <dd>
              {m.vt0 == null ? "not set" : fmt(m.vt0, "V")},{" "}
              {m.ispec == null ? "not set (no inversion coefficients)" : fmt(m.ispec, "A")}
            </dd>
            <dt className="text-stone-500">size</dt>
            <dd>
              {m.nodes?.toLocaleString("en-US")} nodes, {m.devices?.toLocaleString("en-US")} devices
            </dd>
          </dl>
        ) : (
          <p className="text-stone-500">Known once the run starts.</p>
        )}
      </div>
      <div className="space-y-1 text-sm">
        <h2 className="font-medium">Solver and validity</h2>
        <p>
          <span className="text-stone-500">method:</span> <span data-slot="solver-method">{method}</span>
        </p>
        {run.solverReason ? (
          <p>
            <span className="text-stone-500">why:</span> {run.solverReason}
          </p>
        ) : null}
        {run.maxResidual !== null ? (
          <p className="tabular">
            <span className="text-stone-500">largest KCL residual:</span> {fmt(run.maxResidual, "A")}
          </p>
        ) : null}
        <Validity run={run} />
      </div>
    </section>
  );
}
