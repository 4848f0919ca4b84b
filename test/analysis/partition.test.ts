import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { coarsestPartition } from '../../lib/analysis/partition.js';

/** Moore's round-by-round refinement, the textbook definition of the coarsest stable partition: the oracle. */
function refineByRounds(initial: readonly string[], successors: readonly (readonly number[])[]): number[] {
  let cls = initial.map((k, i) => `${successors[i]!.length}|${k}`);
  for (;;) {
    const sig = cls.map((c, i) => `${c}|${successors[i]!.map((t) => (t < 0 ? 'none' : cls[t])).join(',')}`);
    const ids = new Map<string, number>();
    const next = sig.map((s) => (ids.has(s) ? ids.get(s)! : (ids.set(s, ids.size), ids.size - 1)));
    const before = new Set(cls).size;
    cls = next.map(String);
    if (ids.size === before) return next;
  }
}

describe('the coarsest stable partition (Hopcroft)', () => {
  it('equals round-by-round refinement on random graphs of stages (Moore’s algorithm as the oracle)', () => {
    const graph = fc.integer({ min: 1, max: 40 }).chain((n) =>
      fc.tuple(
        fc.array(fc.constantFrom('a', 'b', 'c'), { minLength: n, maxLength: n }),
        fc.array(fc.array(fc.integer({ min: -1, max: n - 1 }), { maxLength: 3 }), { minLength: n, maxLength: n }),
      ),
    );
    fc.assert(
      fc.property(graph, ([initial, successors]) => {
        expect(Array.from(coarsestPartition(initial, successors))).toEqual(refineByRounds(initial, successors));
      }),
      { numRuns: 500, seed: 1971 },
    );
  });

  it('puts the stages of a ring in one class and those of a chain each in its own', () => {
    const n = 10_000;
    const same = Array.from({ length: n }, () => 'stage');
    const ring = coarsestPartition(same, Array.from({ length: n }, (_, i) => [(i + 1) % n]));
    expect(new Set(ring).size).toBe(1);
    const chain = coarsestPartition(same, Array.from({ length: n }, (_, i) => [i + 1 < n ? i + 1 : -1]));
    expect(new Set(chain).size).toBe(n);
  });
});
