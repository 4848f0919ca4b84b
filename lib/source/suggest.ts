/**
 * Optimal-string-alignment edit distance (Levenshtein plus adjacent transposition), the
 * usual measure for "did you mean" hints.
 *
 * Example: `editDistance("nqq", "nq")` is 1; `editDistance("ab", "ba")` is 1.
 */
export function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  if (m === 0) return n;
  if (n === 0) return m;
  let prev2 = new Array<number>(n + 1).fill(0);
  let prev = Array.from({ length: n + 1 }, (_, j) => j);
  let cur = new Array<number>(n + 1).fill(0);
  for (let i = 1; i <= m; i++) {
    cur[0] = i;
    for (let j = 1; j <= n; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      let best = Math.min((prev[j] as number) + 1, (cur[j - 1] as number) + 1, (prev[j - 1] as number) + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) {
        best = Math.min(best, (prev2[j - 2] as number) + 1);
      }
      cur[j] = best;
    }
    [prev2, prev, cur] = [prev, cur, prev2];
  }
  return prev[n] as number;
}

/** Names longer than this get no "did you mean" hint. */
export const SUGGEST_MAX_LENGTH = 200;

/**
 * The closest candidate to `name` when it is close enough to be a likely typo
 * (distance at most one third of the name's length, at least 1), else undefined; a name
 * longer than `SUGGEST_MAX_LENGTH` gets none. Candidates whose length differs by more than
 * the limit are skipped unmeasured (their distance is at least the difference).
 * Case differences count as half an edit so `Bias` finds `bias` first.
 *
 * Example: `closestName("sett", ["set", "reset"])` is `"set"`.
 */
export function closestName(name: string, candidates: Iterable<string>): string | undefined {
  // The distance costs the product of the two lengths: past a length no one types by hand,
  // a hint is worth nothing and would cost minutes (a generated 60,000-letter name).
  if (name.length > SUGGEST_MAX_LENGTH) return undefined;
  const limit = Math.max(1, Math.floor(name.length / 3));
  let best: string | undefined;
  let bestScore = Infinity;
  for (const c of candidates) {
    if (c === name || Math.abs(c.length - name.length) > limit) continue;
    const score = c.toLowerCase() === name.toLowerCase() ? 0.5 : editDistance(name, c);
    if (score <= limit && (score < bestScore || (score === bestScore && best !== undefined && c < best))) {
      best = c;
      bestScore = score;
    }
  }
  return best;
}

/** A "did you mean" note for `name`, or no notes. */
export function didYouMean(name: string, candidates: Iterable<string>): string[] {
  const hit = closestName(name, candidates);
  return hit === undefined ? [] : [`did you mean '${hit}'?`];
}
