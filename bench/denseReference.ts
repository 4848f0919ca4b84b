import { lup, lusolve } from 'mathjs';
import type { LinearSystem, LinearSystemFactory } from '../lib/index.js';

/**
 * The dense reference linear solver: the same slots as the sparse LU, but factored and
 * solved by mathjs (`lup`, `lusolve`) on a dense n×n matrix. Used only as the oracle in
 * tests and as the baseline in the bench.
 */
export const denseReference: LinearSystemFactory = (n, rows, cols): LinearSystem => {
  const slotOf = new Map<number, number>();
  for (let e = 0; e < rows.length; e++) {
    const key = rows[e]! * n + cols[e]!;
    if (!slotOf.has(key)) slotOf.set(key, slotOf.size);
  }
  const keys = [...slotOf.keys()];
  const values = new Float64Array(slotOf.size);
  let factored: ReturnType<typeof lup> | undefined;
  return {
    values,
    position: (r, c) => slotOf.get(r * n + c) ?? -1,
    clear: () => values.fill(0),
    factor: () => {
      const a = Array.from({ length: n }, () => new Array<number>(n).fill(0));
      keys.forEach((key, s) => (a[Math.floor(key / n)]![key % n] = values[s]!));
      try {
        factored = lup(a);
      } catch {
        return false;
      }
      const u = factored.U as unknown as number[][];
      return u.every((row, i) => Number.isFinite(row[i]!) && row[i] !== 0);
    },
    solve: (b, x) => {
      const result = lusolve(factored!, [...b]) as unknown as { toArray?: () => number[][] } | number[][];
      const sol = Array.isArray(result) ? result : result.toArray!();
      for (let i = 0; i < n; i++) x[i] = sol[i]![0]!;
    },
  };
};
