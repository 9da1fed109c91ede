/**
 * "Did you mean ...": the known name nearest to a mistyped one, by edit distance (insertions,
 * deletions, substitutions and swaps of neighbours each count 1). Pure.
 */

/** Optimal-string-alignment distance between `a` and `b`, case-insensitive. */
export function editDistance(a: string, b: string): number {
  const s = a.toLowerCase();
  const t = b.toLowerCase();
  const rows: number[][] = Array.from({ length: s.length + 1 }, (_, i) => [i, ...new Array<number>(t.length).fill(0)]);
  for (let j = 1; j <= t.length; j++) rows[0][j] = j;
  for (let i = 1; i <= s.length; i++) {
    for (let j = 1; j <= t.length; j++) {
      const cost = s[i - 1] === t[j - 1] ? 0 : 1;
      let d = Math.min(rows[i - 1][j] + 1, rows[i][j - 1] + 1, rows[i - 1][j - 1] + cost);
      if (i > 1 && j > 1 && s[i - 1] === t[j - 2] && s[i - 2] === t[j - 1]) d = Math.min(d, rows[i - 2][j - 2] + 1);
      rows[i][j] = d;
    }
  }
  return rows[s.length][t.length];
}

/**
 * The known name nearest to `typed`, or null when none is close: at most a third of the longer
 * name's length may differ (at least 1, at most 4), so an unrelated name is never suggested.
 * A tie goes to the name listed first.
 */
export function nearest(typed: string, known: Iterable<string>): string | null {
  let best: string | null = null;
  let bestDistance = Number.POSITIVE_INFINITY;
  for (const k of known) {
    const d = editDistance(typed, k);
    const allowed = Math.min(4, Math.max(1, Math.floor(Math.max(typed.length, k.length) / 3)));
    if (k !== typed && d <= allowed && d < bestDistance) {
      best = k;
      bestDistance = d;
    }
  }
  return best;
}

/** ` (did you mean "x"?)`, or '' when nothing is close. */
export function didYouMean(typed: string, known: Iterable<string>): string {
  const n = nearest(typed, known);
  return n === null ? '' : ` (did you mean "${n}"?)`;
}
