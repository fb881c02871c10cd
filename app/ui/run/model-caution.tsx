/** The model caution every result page shows: model estimates; foundry models, design rules and measurement take precedence. */
export function ModelCaution() {
  return (
    <p role="note" className="rounded border border-amber-300 bg-amber-50 px-3 py-2 text-sm text-amber-900">
      <strong>Results are model estimates.</strong> Runnel states its model and its limits below; silicon must be
      verified by measurement, and a foundry&apos;s models and design rules take precedence over Runnel&apos;s defaults.
    </p>
  );
}
