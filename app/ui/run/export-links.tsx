/** Download links of a run's tables (CSV) and its whole document (JSON). */

export function ExportLinks({ runId }: { runId: string }) {
  const link = "rounded border border-stone-300 bg-white px-2 py-1 hover:border-moss-500 hover:text-moss-700";
  return (
    <nav aria-label="Export" className="flex flex-wrap items-center gap-2 text-sm">
      <span className="text-stone-500">Export:</span>
      <a className={link} href={`/api/runs/${runId}/export?format=csv&table=probes`} download>
        Probes CSV
      </a>
      <a className={link} href={`/api/runs/${runId}/export?format=csv&table=nodes`} download>
        Nodes CSV
      </a>
      <a className={link} href={`/api/runs/${runId}/export?format=csv&table=devices`} download>
        Devices CSV
      </a>
      <a className={link} href={`/api/runs/${runId}/export?format=json`} download>
        JSON
      </a>
    </nav>
  );
}
