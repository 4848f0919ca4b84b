import { describe, expect, it } from 'vitest';
import { solveOperatingPoint, staticNoiseMargin, sweepTransfer, type Design, type TransferCurve } from '../../lib/index.js';
import { design } from '../helpers.js';

const latch = (tube: string, load: string, series: string, pulldown: string, pullTo = 'bias') =>
  design(`rail bp = 24 V
rail bias = -12 V
defaults { tube = "${tube}" }
stage q  { load ${load} to bp; ${tube === '6AU6' ? 'screen bp;' : ''} input nq series ${series} pulldown ${pulldown} to ${pullTo} }
stage nq { load ${load} to bp; ${tube === '6AU6' ? 'screen bp;' : ''} input q  series ${series} pulldown ${pulldown} to ${pullTo} }`);

const butterfly = (d: Design) => {
  const a = sweepTransfer(d, { input: 'q', output: 'nq', from: 0, to: 24, points: 241 })!;
  const b = sweepTransfer(d, { input: 'nq', output: 'q', from: 0, to: 24, points: 241 })!;
  return { a, b, result: staticNoiseMargin(a, b) };
};

const at = (c: TransferCurve, x: number) => {
  for (let i = 0; i + 1 < c.vin.length; i++) {
    if (x >= c.vin[i]! && x <= c.vin[i + 1]!) {
      const t = (x - c.vin[i]!) / (c.vin[i + 1]! - c.vin[i]!);
      return c.vout[i]! + t * (c.vout[i + 1]! - c.vout[i]!);
    }
  }
  throw new Error('outside the sweep');
};

const CASES: [string, Design][] = [
  ['pentode latch, 33 kΩ loads, 220 kΩ / 220 kΩ to −12 V', latch('6AU6', '33 k', '220 k', '220 k')],
  ['pentode latch, 10 kΩ loads, 22 kΩ / 33 kΩ to −12 V', latch('6AU6', '10 k', '22 k', '33 k')],
  ['twin-triode latch, 100 kΩ loads, 330 kΩ / 330 kΩ to −12 V', latch('12AU7', '100 k', '330 k', '330 k')],
  ['pentode latch whose pull-downs return to 0 V', latch('6AU6', '33 k', '220 k', '220 k', 'gnd')],
];

describe('transfer curves and the butterfly of a latch', () => {
  for (const [what, d] of CASES) {
    it(`agree with the full solve for a ${what}: bistable exactly when both states hold, with the states on the curves`, () => {
      const { a, b, result } = butterfly(d);
      const one = solveOperatingPoint(d, { hints: [{ net: 'q', high: true }] });
      const zero = solveOperatingPoint(d, { hints: [{ net: 'q', high: false }] });
      if (!('nodes' in one) || !('nodes' in zero)) throw new Error('no solve');
      const holds = one.hints[0]!.held && zero.hints[0]!.held && !one.diagnostics.some((x) => x.code === 'state-undecided');
      expect(result.bistable).toBe(holds);
      if (holds) {
        // A stable state is a fixed point of the loop: each net lies on the curve of the other.
        expect(Math.abs(at(a, one.nodes.get('q')!) - one.nodes.get('nq')!)).toBeLessThan(0.02);
        expect(Math.abs(at(b, one.nodes.get('nq')!) - one.nodes.get('q')!)).toBeLessThan(0.02);
        expect(result.snm).toBeGreaterThan(0);
      }
    });
  }

  it('gives the pentode latch with 33 kΩ loads and 220 kΩ / 220 kΩ dividers a wide static noise margin (the bench latch "holds with wide margins", common practice, no source)', () => {
    expect(butterfly(CASES[0]![1]).result.snm).toBeGreaterThan(3);
  });

  it('finds no state in the latch whose pull-downs return to 0 V: both grids conduct', () => {
    expect(butterfly(CASES[3]![1]).result).toMatchObject({ bistable: false, snm: 0 });
  });
});
