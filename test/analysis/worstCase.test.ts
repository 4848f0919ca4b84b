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

const latchText = (tube: string, tol: string, load: string, divider: string, screen: string) => `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "${tube}", tolerance = ${tol} }
stage q  { load ${load} to bp; ${screen} input nq series ${divider} pulldown ${divider} to bias }
stage nq { load ${load} to bp; ${screen} input q  series ${divider} pulldown ${divider} to bias }`;

const DESIGNS: [string, string, StateHint[], string, string][] = [
  ['a pentode latch (10 parameters)', latchText('6AU6', '5 %', '33 k', '220 k', 'screen bp;'), [{ net: 'q', high: true }], 'q', 'nq'],
  ['a twin-triode latch (10 parameters)', latchText('12AU7', '10 %', '100 k', '330 k', ''), [{ net: 'q', high: false }], 'nq', 'q'],
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
