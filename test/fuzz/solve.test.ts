import { describe, expect, it } from 'vitest';
import { BATCH, failureLines, newTally, record, runLibrary } from '../../tools/fuzz.js';
import { sampleDesigns } from '../../tools/fuzzDesigns.js';

/**
 * Issue 14's fuzzing in `npm test`, part 1 of 3 (with library.test.ts and
 * commands.test.ts: 10,000 runs in all): odd but valid designs from the language's own
 * grammar (tools/fuzzDesigns.ts), each run held to the invariants of tools/fuzz.ts — no
 * internal error; no NaN or Infinity; no null without a `…Why` reason; every DC net within
 * the span of the fixed voltages widened by the grid onsets behind each net and 0.5 V; no run
 * over 60 s. The span is
 * Kirchhoff's current law on passive elements (a node of resistors, diodes and tubes
 * cannot lie outside the voltages that feed it: the maximum principle of a resistive
 * network; common practice, no source), widened by the bounded grid-current onset.
 * `npm run fuzz` runs the same mix at 100,000 runs.
 */
describe('odd but valid designs solve within the invariants of issue 14', () => {
  it('8,800 tiny designs (one chain, gate, latch, fan-out, array or handful of raw parts each) solve through the library with finite, explained, in-span results', () => {
    const t = newTally();
    for (const fd of sampleDesigns(142_026, 8800, BATCH.tiny)) record(t, runLibrary(fd, 'solve'), fd.text, { op: 'solve' });
    expect(t.runs).toBe(8800);
    // Most designs must load and be answered, or the fuzzer is only exercising the diagnostics.
    expect(t.byOutcome.rejected).toBeLessThan(t.runs * 0.2);
    expect(failureLines(t)).toEqual([]);
  });
});
