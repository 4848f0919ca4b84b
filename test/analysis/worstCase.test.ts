import { describe, expect, it } from 'vitest';
import { designParameters, worstCaseVoltage } from '../../lib/index.js';
import { design } from '../helpers.js';
import { exhaustive, SMALL_DESIGNS } from './oracle.js';

describe('worst case by vertex against exhaustive corners (the oracle)', () => {
  for (const [what, text, hints, highNet, lowNet] of SMALL_DESIGNS) {
    it(`is never optimistic for ${what}: worst high ≤ exhaustive minimum + 1 mV, worst low ≥ exhaustive maximum − 1 mV`, () => {
      const d = design(text);
      const parameters = designParameters(d);
      expect(parameters.length).toBeLessThanOrEqual(12);
      const high = worstCaseVoltage(d, { net: highNet, worst: 'min', hints, parameters })!;
      const low = worstCaseVoltage(d, { net: lowNet, worst: 'max', hints, parameters })!;
      const oracle = exhaustive(d, hints);
      const oracleHigh = oracle.get(highNet)!;
      const oracleLow = oracle.get(lowNet)!;
      expect(high.stateHolds && low.stateHolds).toBe(true);
      expect(high.worst!).toBeLessThanOrEqual(oracleHigh.min + 1e-3);
      expect(low.worst!).toBeGreaterThanOrEqual(oracleLow.max - 1e-3);
      // How pessimistic: the vertex found is a corner, so it cannot be beyond the oracle either.
      expect(oracleHigh.min - high.worst!).toBeLessThanOrEqual(1e-3);
      expect(low.worst! - oracleLow.max).toBeLessThanOrEqual(1e-3);
      expect(high.worst!).toBeLessThan(high.nominal);
      expect(low.worst!).toBeGreaterThan(low.nominal);
    });
  }
});
