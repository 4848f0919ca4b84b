import { describe, expect, it } from 'vitest';
import { E_SERIES, preferredValues } from '../../lib/index.js';

describe('the IEC 60063 series (from memory)', () => {
  it('have 6, 12, 24 and 96 values a decade, rising, each series holding the one below it', () => {
    expect([E_SERIES.E6.length, E_SERIES.E12.length, E_SERIES.E24.length, E_SERIES.E96.length]).toEqual([6, 12, 24, 96]);
    for (const s of Object.values(E_SERIES)) for (let i = 1; i < s.length; i++) expect(s[i]!).toBeGreaterThan(s[i - 1]!);
    for (const v of E_SERIES.E6) expect(E_SERIES.E12 as readonly number[]).toContain(v);
    for (const v of E_SERIES.E12) expect(E_SERIES.E24 as readonly number[]).toContain(v);
  });

  it('give E96 by the formula 10^(i/96) to three figures, as the standard defines it', () => {
    E_SERIES.E96.forEach((v, i) => expect(v).toBeCloseTo(Number((10 ** (i / 96)).toPrecision(3)), 9));
  });

  it('depart from the formula in E24 exactly where the standard does: 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2', () => {
    const departs = E_SERIES.E24.filter((v, i) => v !== Number((10 ** (i / 24)).toPrecision(2)));
    expect(departs).toEqual([2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]);
  });

  it('list the values of a range over decades: E12 from 20 kΩ to 50 kΩ is 22 k, 27 k, 33 k, 39 k, 47 k', () => {
    expect(preferredValues('E12', 20e3, 50e3)).toEqual([22e3, 27e3, 33e3, 39e3, 47e3]);
    expect(preferredValues('E6', 80, 1.6e3)).toEqual([100, 150, 220, 330, 470, 680, 1000, 1500]);
  });
});
