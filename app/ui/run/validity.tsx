/**
 * The run's validity, in two kinds told apart at a glance: notes (how the run
 * was solved, what could not be checked: informational, in the stone/tide
 * tones) and warnings (devices outside weak inversion or saturation, accuracy
 * warnings, points not solved: amber, failures ember).
 */
import type { RunRow } from "@/app/lib/runs";
import { WEAK_INVERSION_IC } from "@/src/lang/vocabulary";

export function Validity({ run }: { run: RunRow }) {
  if (run.devicesNotWeak === null) return null;
  const notes: string[] = [];
  const warnings: string[] = [];
  const failures: string[] = [];
  const ispec = (run.model as { ispec?: number | null } | null)?.ispec;
  if (ispec == null) notes.push("Inversion coefficients are unknown (set ispec and vt0 to check weak inversion).");
  else if (run.devicesNotWeak > 0)
    warnings.push(
      `${run.devicesNotWeak.toLocaleString("en-US")} device(s) leave weak inversion (IC > ${WEAK_INVERSION_IC}) at some point: the exponential model does not hold there.`,
    );
  // Devices a saturated or unsaturated expectation covers are left to it (the Expectations panel reports them).
  const expected = run.expectationsFailing !== null;
  if (run.devicesNotSaturated! > 0)
    warnings.push(
      `${run.devicesNotSaturated!.toLocaleString("en-US")} device(s)${expected ? " that no expectation covers" : ""} are not saturated (V_DS ≤ 4 U_T) at some point.`,
    );
  if (run.newtonPoints)
    notes.push("The network is outside the linear class: solved by damped Newton iteration, not exactly.");
  for (const w of run.warnings ?? [])
    warnings.push(`${w.message} (${w.points} point${w.points === 1 ? "" : "s"}, first at point ${w.firstPoint})`);
  for (const f of (run.failures ?? []).slice(0, 5)) failures.push(`Not solved: ${f.message}`);
  return (
    <div className="space-y-2">
      {notes.length ? (
        <ul aria-label="Validity notes" className="space-y-0.5 text-stone-700" data-slot="validity-notes">
          {notes.map((t, i) => (
            <li key={i} className="flex gap-2">
              <span
                aria-hidden
                className="mt-0.5 inline-flex h-4 w-4 shrink-0 items-center justify-center rounded-full border border-tide-600 text-[10px] font-semibold text-tide-600"
              >
                i
              </span>
              <span>{t}</span>
            </li>
          ))}
        </ul>
      ) : null}
      {warnings.length || failures.length ? (
        <ul
          aria-label="Validity warnings"
          className="space-y-0.5 rounded border border-amber-300 bg-amber-50 px-2 py-1.5 text-amber-900"
          data-slot="validity-warnings"
        >
          {warnings.map((t, i) => (
            <li key={i} className="flex gap-2">
              <span aria-hidden>▲</span>
              <span>{t}</span>
            </li>
          ))}
          {failures.map((t, i) => (
            <li key={`f${i}`} className="flex gap-2 text-ember-700">
              <span aria-hidden>✕</span>
              <span>{t}</span>
            </li>
          ))}
        </ul>
      ) : ispec != null ? (
        <p className="text-moss-700">
          {expected
            ? "Every device stays in weak inversion, and in saturation where no expectation says otherwise, at every point."
            : "Every device stays in weak inversion and saturation at every point."}
        </p>
      ) : run.devicesNotSaturated === 0 ? (
        <p className="text-moss-700">Every device stays in saturation at every point.</p>
      ) : null}
    </div>
  );
}
