/** Damerau–Levenshtein (optimal string alignment) distance, for "did you mean" suggestions. */
export function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  const d: number[][] = Array.from({ length: m + 1 }, (_, i) => [i, ...new Array<number>(n).fill(0)]);
  for (let j = 0; j <= n; j++) d[0][j] = j;
  for (let i = 1; i <= m; i++) {
    for (let j = 1; j <= n; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      d[i][j] = Math.min(d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d[i][j] = Math.min(d[i][j], d[i - 2][j - 2] + 1);
    }
  }
  return d[m][n];
}

/** The closest candidate, or undefined when nothing is reasonably close. */
export function nearest(word: string, candidates: readonly string[]): string | undefined {
  // Short words are near everything: allow one edit below four letters, then about a third of the word.
  const allowed = word.length < 4 ? 1 : Math.max(2, Math.floor(word.length / 3));
  const w = word.toLowerCase();
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of candidates) {
    // The lengths alone bound the distance from below: far longer or shorter words are not compared.
    const gap = Math.abs(c.length - w.length);
    if (gap > allowed || gap >= bestD) continue;
    const dist = editDistance(w, c.toLowerCase());
    if (dist < bestD) {
      bestD = dist;
      best = c;
    }
  }
  return best !== undefined && bestD <= allowed ? best : undefined;
}
