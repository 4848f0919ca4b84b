import { describe, expect, it } from 'vitest';
import { TUBE_LIBRARY } from '../../lib/index.js';
import { STANDARD_LATCH, standardLatch } from '../../lib/analysis/standardLatch.js';
import { runCommand } from '../cliRun.js';

describe('each library type in the standard latch (24 V B+, -12 V bias)', () => {
  it('holds the cut-off side where its divider meets a grid clamped at the cathode (Ohm\'s law; grid current clamps a driven grid within a few tenths of a volt of its cathode, common practice, no source)', () => {
    for (const entry of TUBE_LIBRARY) {
      const f = standardLatch(entry)!;
      const v = entry.model.kind === 'koren-pentode' ? STANDARD_LATCH.pentode : STANDARD_LATCH.triode;
      // The cut-off side's plate feeds the conducting grid through the series resistor; the pull-down's current to the bias is small beside it once the grid clamps.
      const clampedAt = (grid: number) => (STANDARD_LATCH.bplus * v.series + grid * v.load) / (v.load + v.series);
      for (const levels of [f.weak, f.nominal, f.strong]) {
        if (!levels) continue;
        expect(levels.high, entry.designation).toBeGreaterThanOrEqual(clampedAt(0) - 0.01);
        expect(levels.high, entry.designation).toBeLessThanOrEqual(clampedAt(0.5));
      }
    }
  });

  it('pulls the conducting plate lower the stronger the tubes, and every type latches at nominal', () => {
    for (const entry of TUBE_LIBRARY) {
      const f = standardLatch(entry)!;
      expect(f.nominal, entry.designation).toBeDefined();
      expect(f.nominal!.low).toBeGreaterThan(0);
      expect(f.strong!.low, entry.designation).toBeLessThan(f.nominal!.low);
      if (f.weak) expect(f.weak.low, entry.designation).toBeGreaterThan(f.nominal!.low);
    }
  });

  it('flags types run outside the plate voltages they are trusted over: every triode fit from 50 V up runs at 2–19 V here', () => {
    for (const entry of TUBE_LIBRARY) if (entry.trustedPlateVolts[0] >= 50) expect(standardLatch(entry)!.outsideTrusted, entry.designation).toBe(true);
  });

  it('is shown by `tubemargin tubes`, starred where untrusted, and in its JSON', async () => {
    const text = await runCommand(['tubes']);
    expect(text.code).toBe(0);
    expect(text.out).toContain('a standard latch at 24 V B+');
    expect(text.out).toMatch(/^12AU7 +50–300 V +18\.4\* \/ \d\.\d\* +18\.4\* \/ \d\.\d\*/m);
    const json = JSON.parse((await runCommand(['tubes', '--json'])).out);
    const au7 = json.tubes.find((t: { designation: string }) => t.designation === '12AU7');
    expect(au7.standardLatch.nominal.high).toBeCloseTo(standardLatch(TUBE_LIBRARY.find((e) => e.designation === '12AU7')!)!.nominal!.high, 9);
  });
});
