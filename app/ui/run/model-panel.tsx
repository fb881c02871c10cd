/** The run's model (device equations and constants) and how it was solved, with its validity notes. */
import { formatEng, formatNumber } from "@/app/lib/format";
import type { RunRow } from "@/app/lib/runs";
import { Validity } from "./validity";

export function ModelPanel({ run, swept }: { run: RunRow; swept: string[] }) {
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
            <dd>{formatNumber(m.kappa ?? NaN)}</dd>
            <dt className="text-stone-500">temperature</dt>
            <dd>
              {swept.includes("temp") ? "swept (see each point); otherwise " : ""}
              {formatNumber(m.temp ?? NaN)} K (U<sub>T</sub> = {formatEng(m.ut ?? NaN, "V")})
            </dd>
            <dt className="text-stone-500">I₀ (W/L = 1)</dt>
            <dd>{formatEng(m.i0 ?? NaN, "A")}</dd>
            <dt className="text-stone-500">
              V<sub>T0</sub>, I<sub>spec</sub>
            </dt>
            <dd>
              {m.vt0 == null ? "not set" : formatEng(m.vt0, "V")},{" "}
              {m.ispec == null ? "not set (no inversion coefficients)" : formatEng(m.ispec, "A")}
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
            <span className="text-stone-500">largest KCL residual:</span> {formatEng(run.maxResidual, "A")}
          </p>
        ) : null}
        <Validity run={run} />
      </div>
    </section>
  );
}
