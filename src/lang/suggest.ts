/** "did you mean …?": the candidate closest to a misspelt name, when one is close enough to be meant. */

/** Levenshtein distance of a and b, or 3 when their lengths differ by more than 2 (too far to suggest either way). */
function editDistance(a: string, b: string): number {
  if (Math.abs(a.length - b.length) > 2) return 3;
  const row = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = row[0];
    row[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const cur = row[j];
      row[j] = Math.min(row[j] + 1, row[j - 1] + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = cur;
    }
  }
  return row[b.length];
}

/** "did you mean 'x'?" for a close candidate: distance 1 for names of 3-4 characters, 2 for longer ones. */
export function suggest(name: string, candidates: Iterable<string>): string | undefined {
  if (name.length > 40 || name.length < 3) return undefined;
  const limit = name.length <= 4 ? 1 : 2;
  let best: string | undefined;
  let bestD = limit + 1;
  for (const c of candidates) {
    if (c.length < 2) continue;
    const d = editDistance(name, c);
    if (d < bestD) {
      best = c;
      bestD = d;
    }
  }
  return best === undefined ? undefined : `did you mean '${best}'?`;
}
