import { describe, expect, it } from 'vitest';
import { closestName, editDistance } from '../../lib/index.js';

describe('edit distance (optimal string alignment, Damerau 1964 / Levenshtein 1966)', () => {
  it('counts insertions, deletions, substitutions and adjacent swaps as one edit each', () => {
    expect(editDistance('', '')).toBe(0);
    expect(editDistance('abc', '')).toBe(3);
    expect(editDistance('kitten', 'sitting')).toBe(3); // the textbook example
    expect(editDistance('nqq', 'nq')).toBe(1);
    expect(editDistance('ab', 'ba')).toBe(1);
    expect(editDistance('stage', 'stag')).toBe(1);
  });

  it('suggests the closest name only when it is close enough', () => {
    expect(closestName('sett', ['set', 'reset'])).toBe('set');
    expect(closestName('Bias', ['bias', 'bp'])).toBe('bias');
    expect(closestName('zzzzzz', ['set', 'reset'])).toBeUndefined();
    expect(closestName('set', ['set'])).toBeUndefined();
  });
});
