import { describe, expect, it } from 'vitest';
import { FARADS, OHMS, VOLTS, describeDimension, parseUnitSuffix } from '../../lib/netlist/units.js';

describe('units (SI prefixes per the SI Brochure, BIPM 2019)', () => {
  it('derives the ohm, farad and watt from volt, ampere and second', () => {
    expect(parseUnitSuffix('kΩ')).toEqual({ scale: 1000, dim: OHMS });
    expect(parseUnitSuffix('pF')?.dim).toEqual(FARADS);
    expect(parseUnitSuffix('pF')?.scale).toBeCloseTo(1e-12, 24);
    expect(parseUnitSuffix('mV')?.dim).toEqual(VOLTS);
    expect(describeDimension({ volt: 1, amp: 1, second: 0 })).toBe('watts');
  });

  it('refuses what is not a unit, and a prefix on a percent sign', () => {
    expect(parseUnitSuffix('furlong')).toBeUndefined();
    expect(parseUnitSuffix('k%')).toBeUndefined();
    expect(parseUnitSuffix('AU7')).toBeUndefined();
  });
});
