/** What a result view shows while its point is on its way. */

export function LoadingNote() {
  return <p className="text-stone-500">Loading…</p>;
}
