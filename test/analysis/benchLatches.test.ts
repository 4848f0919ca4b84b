import { describe, expect, it } from 'vitest';
import { checkOf, design } from '../helpers.js';
import { buttonLatchText } from './oracle.js';

/**
 * Cross-coupled latches at 24 V / −12 V with set and clear buttons, in the arrangements
 * of known bench results (common practice, no source): a pentode latch with 33 kΩ loads
 * and 220 kΩ / 220 kΩ dividers holds with wide margins; twin triodes in that same
 * arrangement did not work on the bench, and did with 100 kΩ loads and 330 kΩ / 330 kΩ
 * dividers. The models are not tuned to these: the library's 6AU6 fit and Koren's 12AU7.
 */
const latch = (tube: string, screen: string, load: string, divider: string) => design(buttonLatchText(tube, screen, load, divider));

describe('latches with known bench results (common practice, no source)', () => {
  it('the pentode latch with 33 kΩ loads and 220 kΩ / 220 kΩ dividers holds with wide margins and switches from both inputs', () => {
    const r = checkOf(latch('6AU6', 'screen bp;', '33 k', '220 k'));
    expect(r.verdict).toBe('pass');
    const l = r.latches[0]!;
    expect(l.holds).toBe(true);
    // "Wide": several volts of nominal static noise margin out of a 24 V swing, and still over a volt in worst case.
    expect(l.snm.nominal).toBeGreaterThan(5);
    expect(l.snm.worst).toBeGreaterThan(1);
    expect(l.inputs.map((i) => i.switches)).toEqual([true, true]);
  });

  it('twin triodes in the same arrangement cannot be relied on: in worst case the OFF triode is not cut off and the latch does not hold', () => {
    const r = checkOf(latch('12AU7', '', '33 k', '220 k'));
    expect(r.verdict).toBe('fail');
    expect(r.latches[0]!.holds).toBe(false);
    const q = r.nets.find((n) => n.name === 'q')!;
    expect(q.cutoffMargin!.volts).toBeLessThan(0);
  });

  it('twin triodes with 100 kΩ loads and 330 kΩ / 330 kΩ dividers hold and switch from both inputs', () => {
    const r = checkOf(latch('12AU7', '', '100 k', '330 k'));
    const l = r.latches[0]!;
    expect(l.holds).toBe(true);
    expect(l.snm.worst).toBeGreaterThan(0.5);
    expect(l.inputs.map((i) => i.switches)).toEqual([true, true]);
    expect(r.nets.find((n) => n.name === 'q')!.cutoffMargin!.volts).toBeGreaterThan(0);
  });
});
