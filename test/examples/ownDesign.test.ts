/**
 * The example of the README's "Property tests of your own design", as a builder would
 * write it: every set of part values within tolerance keeps the design's margins.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { analyzeAt, deviationsOf, loadDesign } from '../../lib/index.js';
import { design as fromText } from '../helpers.js';

const LATCH = `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "6AU6", tolerance = 5 %, margin = 1 V }
button SET (set, bp)
resistor RS (set, bias) 100 k
button CLR (clr, bp)
resistor RC (clr, bias) 100 k
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias; input clr series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias; input set series 220 k pulldown 220 k to bias }`;

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
