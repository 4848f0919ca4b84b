/**
 * The example of the README's "Property tests of your own design", as a builder would
 * write it: every set of part values within tolerance keeps the design's margins.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyzeAt, deviationsOf, loadDesign } from '../../lib/index.js';
import { buttonLatchText } from '../analysis/oracle.js';
import { design as fromText } from '../helpers.js';

// The design under test: here the bench latch the other tests use; yours would be read from its file.
const LATCH = buttonLatchText('6AU6', 'screen bp;', '33 k', '220 k');

describe('a property test of a design of your own', () => {
  it('my latch keeps its margins for every set of part values within tolerance', () => {
    const design = loadDesign('latch.tube', LATCH).design!;
    fc.assert(
      fc.property(deviationsOf(design), (d) => analyzeAt(design, d).pass),
      { seed: 1, numRuns: 200 },
    );
  });

  it('finds and shrinks a failure where there is one: the same latch with 25 % resistors', () => {
    const design = fromText(LATCH.replace('tolerance = 5 %', 'tolerance = 25 %'));
    const out = fc.check(fc.property(deviationsOf(design), (d) => analyzeAt(design, d).pass), { seed: 1, numRuns: 300 });
    expect(out.failed).toBe(true);
    const found = out.counterexample![0];
    expect(analyzeAt(design, found).pass).toBe(false);
  });
});
