/** The run's validity: devices outside weak inversion or saturation, solver notes, warnings and failed points. */
import type { RunRow } from "@/app/lib/runs";
import { WEAK_INVERSION_IC } from "@/src/lang/vocabulary";

export function Validity({ run }: { run: RunRow }) {
  if (run.devicesNotWeak === null) return null;
  const items: string[] = [];
  const ispec = (run.model as { ispec?: number | null } | null)?.ispec;
  if (ispec == null) items.push("Inversion coefficients are unknown (set ispec and vt0 to check weak inversion).");
  else if (run.devicesNotWeak > 0)
    items.push(
      `${run.devicesNotWeak.toLocaleString("en-US")} device(s) leave weak inversion (IC > ${WEAK_INVERSION_IC}) at some point: the exponential model does not hold there.`,
    );
  // Devices a saturated or unsaturated expectation covers are left to it (the Expectations panel reports them).
  const expected = run.expectationsFailing !== null;
  if (run.devicesNotSaturated! > 0)
    items.push(
      `${run.devicesNotSaturated!.toLocaleString("en-US")} device(s)${expected ? " that no expectation covers" : ""} are not saturated (V_DS ≤ 4 U_T) at some point.`,
    );
  if (run.newtonPoints)
    items.push("The network is outside the linear class: solved by damped Newton iteration, not exactly.");
  for (const w of run.warnings ?? [])
    items.push(`${w.message} (${w.points} point${w.points === 1 ? "" : "s"}, first at point ${w.firstPoint})`);
  for (const f of (run.failures ?? []).slice(0, 5)) items.push(`Not solved: ${f.message}`);
  if (items.length === 0)
    return (
      <p className="text-moss-700">
        {expected
          ? "Every device stays in weak inversion, and in saturation where no expectation says otherwise, at every point."
          : "Every device stays in weak inversion and saturation at every point."}
      </p>
    );
  return (
    <ul aria-label="Validity warnings" className="list-disc space-y-0.5 pl-5 text-amber-900">
      {items.map((t, i) => (
        <li key={i}>{t}</li>
      ))}
    </ul>
  );
}
