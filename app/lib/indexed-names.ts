/**
 * Names with an index, as `for` loops make them (`x12`, `out3`, `n4_7`):
 * grouped by their stem so a run page can draw a spatial profile (one index)
 * or a map (two indices). Pure; used on the client.
 */

export interface Profile {
  stem: string;
  /** Sorted indices, and the position in the source array of each. */
  index: number[];
  at: number[];
}

export interface Grid {
  stem: string;
  rows: number;
  cols: number;
  /** at[i][j]: position in the source array, or -1 where no such name exists. */
  at: number[][];
}

const TWO = /^([A-Za-z_][A-Za-z0-9_]*?)(\d+)_(\d+)$/;
const ONE = /^([A-Za-z_][A-Za-z0-9_]*?)(\d+)$/;

/** Profiles (at least `minLength` names of one stem) and grids (at least 2 × 2) among `names`. */
export function indexedGroups(names: readonly string[], minLength = 3): { profiles: Profile[]; grids: Grid[] } {
  const one = new Map<string, [number, number][]>();
  const two = new Map<string, [number, number, number][]>();
  names.forEach((name, k) => {
    const m2 = TWO.exec(name);
    if (m2) {
      const list = two.get(m2[1]) ?? [];
      list.push([Number(m2[2]), Number(m2[3]), k]);
      two.set(m2[1], list);
      return;
    }
    const m1 = ONE.exec(name);
    if (m1) {
      const list = one.get(m1[1]) ?? [];
      list.push([Number(m1[2]), k]);
      one.set(m1[1], list);
    }
  });
  const profiles: Profile[] = [];
  for (const [stem, list] of one) {
    if (list.length < minLength) continue;
    list.sort((a, b) => a[0] - b[0]);
    profiles.push({ stem, index: list.map((e) => e[0]), at: list.map((e) => e[1]) });
  }
  const grids: Grid[] = [];
  for (const [stem, list] of two) {
    const rows = Math.max(...list.map((e) => e[0])) + 1;
    const cols = Math.max(...list.map((e) => e[1])) + 1;
    if (rows < 2 || cols < 2 || rows * cols > 1_000_000) continue;
    const at = Array.from({ length: rows }, () => new Array<number>(cols).fill(-1));
    for (const [i, j, k] of list) at[i][j] = k;
    grids.push({ stem, rows, cols, at });
  }
  profiles.sort((a, b) => b.index.length - a.index.length || a.stem.localeCompare(b.stem));
  grids.sort((a, b) => b.rows * b.cols - a.rows * a.cols || a.stem.localeCompare(b.stem));
  return { profiles, grids };
}
