import { describe, expect, it } from 'vitest';
import { applies, BATCH, failureLines, LIBRARY_OPERATIONS, newTally, record, runLibrary } from '../../tools/fuzz.js';
import { sampleDesigns } from '../../tools/fuzzDesigns.js';

/** Issue 14's fuzzing, part 2 of 3: the library functions behind check, check --samples, sweep, step and pulse (see solve.test.ts for the invariants). */
describe('odd but valid designs go through the analyses within the invariants of issue 14', () => {
  it('small designs go through check, the Monte Carlo run, sweep, step and pulse as the commands call them: 900 runs', () => {
    const t = newTally();
    for (const fd of sampleDesigns(142_027, 300, BATCH.small)) {
      for (const op of LIBRARY_OPERATIONS.filter((o) => o !== 'solve' && applies(fd, o))) {
        if (t.runs < 900) record(t, runLibrary(fd, op), fd.text, { op });
      }
    }
    expect(t.runs).toBe(900);
    expect(t.byOutcome.rejected).toBeLessThan(t.runs * 0.3);
    expect(failureLines(t)).toEqual([]);
  }, 400_000); // 900 analyses, each check searching its receivers' threshold corners (about 2 minutes alone on a 2-core machine)

  it('instance arrays of a hundred to a thousand stages (chains, rings, fan-outs) solve, check and sweep', () => {
    const t = newTally();
    const designs = sampleDesigns(142_028, 6, { motifs: ['array'], maxMotifs: 1, longArrayChance: 1, longArray: 1000 });
    for (const fd of designs) for (const op of ['solve', 'check', 'sweep'] as const) record(t, runLibrary(fd, op), fd.text, { op });
    expect(Math.min(...designs.map((d) => d.arrayCells))).toBeGreaterThanOrEqual(100);
    expect(t.runs).toBe(18);
    expect(failureLines(t)).toEqual([]);
  });
});
