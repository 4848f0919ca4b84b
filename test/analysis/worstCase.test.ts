import { describe, expect, it } from 'vitest';
import { applyParameters, buildStageGraph, corners, designParameters, solveOperatingPoint, worstCaseVoltage, type Design, type StateHint } from '../../lib/index.js';
import { design } from '../helpers.js';

/** The exhaustive oracle: every corner of the tolerance box solved from the nominal state. */
function exhaustive(d: Design, net: string, hints: StateHint[]): { min: number; max: number } {
  const params = designParameters(d);
  const graph = buildStageGraph(d);
  const nominal = solveOperatingPoint(d, { graph, hints });
  if (!('nodes' in nominal)) throw new Error('no solve');
  let min = Infinity;
  let max = -Infinity;
  for (const corner of corners(params)) {
    const varied = applyParameters(d, corner);
    const op = solveOperatingPoint(varied.design, { graph, variation: varied.variation, start: nominal.x });
    if (!('nodes' in op)) throw new Error('no solve');
    min = Math.min(min, op.nodes.get(net)!);
    max = Math.max(max, op.nodes.get(net)!);
  }
  return { min, max };
}

const DESIGNS: [string, string, StateHint[], string, string][] = [
  [
    'a pentode latch (10 parameters)',
    `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "6AU6", tolerance = 5 % }
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias }`,
    [{ net: 'q', high: true }],
    'q',
    'nq',
  ],
  [
    'a twin-triode latch (10 parameters)',
    `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "12AU7", tolerance = 10 % }
stage q  { load 100 k to bp; input nq series 330 k pulldown 330 k to bias }
stage nq { load 100 k to bp; input q  series 330 k pulldown 330 k to bias }`,
    [{ net: 'q', high: false }],
    'nq',
    'q',
  ],
  [
    'two inverters in a chain (9 parameters)',
    `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
drive IN (x) 24 V
defaults { tube = "6AU6", tolerance = 5 % }
stage a { load 33 k to bp; screen bp; input x series 220 k pulldown 220 k to bias }
stage b { load 33 k to bp; screen bp; input a series 220 k pulldown 220 k to bias }`,
    [],
    'b',
    'a',
  ],
];

describe('worst case by vertex against exhaustive corners (the oracle)', () => {
  for (const [what, text, hints, highNet, lowNet] of DESIGNS) {
    it(`is never optimistic for ${what}: worst high ≤ exhaustive minimum + 1 mV, worst low ≥ exhaustive maximum − 1 mV`, () => {
      const d = design(text);
      const parameters = designParameters(d);
      expect(parameters.length).toBeLessThanOrEqual(12);
      const high = worstCaseVoltage(d, { net: highNet, worst: 'min', hints, parameters })!;
      const low = worstCaseVoltage(d, { net: lowNet, worst: 'max', hints, parameters })!;
      const oracleHigh = exhaustive(d, highNet, hints);
      const oracleLow = exhaustive(d, lowNet, hints);
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
