import type { NetworkSummary } from "@/app/lib/networks";

/** The newest run's validity in a few words: what left weak inversion or saturation, warnings, failed points. */
export function RunValidity({ run }: { run: NonNullable<NetworkSummary["lastRun"]> }) {
  if (run.devicesNotWeak === null) return null;
  const parts = [
    run.devicesNotWeak ? `${run.devicesNotWeak} outside weak inversion` : null,
    run.devicesNotSaturated ? `${run.devicesNotSaturated} not saturated` : null,
    run.warnings ? `${run.warnings} warning${run.warnings === 1 ? "" : "s"}` : null,
    run.failures ? `${run.failures} point${run.failures === 1 ? "" : "s"} not solved` : null,
  ].filter(Boolean);
  return parts.length ? (
    <span className="text-amber-800" data-slot="run-validity">
      ▲ {parts.join(" · ")}
    </span>
  ) : (
    <span className="text-moss-700" data-slot="run-validity">
      ✓ valid
    </span>
  );
}
