import { describe, expect, it } from 'vitest';
import { applyParameters, corners, designParameters, solveOperatingPoint } from '../../lib/index.js';
import { design } from '../helpers.js';

describe('design parameters and their corners', () => {
  const d = design(`rail bp = 24 V tol 5 %
rail bias = -12 V tol 10 %
resistor R1 (bp, x) 10 k tol 1 %
resistor R2 (x, bias) 20 k tol 2 %
resistor R3 (x, gnd) 1 M tol 0`);

  it('lists every toleranced quantity with its band, and leaves out exact ones', () => {
    expect(designParameters(d).map((p) => [p.id, Number(p.low.toFixed(6)), Number(p.high.toFixed(6))])).toEqual([
      ['V:bp', 22.8, 25.2],
      ['V:bias', -13.2, -10.8],
      ['R:R1', 9900, 10100],
      ['R:R2', 19600, 20400],
    ]);
  });

  it('finds by exhaustive corners the extremes of a divider that the closed form gives (its output is monotone in every parameter)', () => {
    const params = designParameters(d);
    const out: number[] = [];
    for (const corner of corners(params)) {
      const varied = applyParameters(d, corner);
      const op = solveOperatingPoint(varied.design);
      if (!('nodes' in op)) throw new Error('no solve');
      out.push(op.nodes.get('x')!);
    }
    expect(out).toHaveLength(16);
    // Three resistors into one node: x = (bp/R1 + bias/R2) / (1/R1 + 1/R2 + 1/R3).
    const x = (bp: number, bias: number, r1: number, r2: number) => (bp / r1 + bias / r2) / (1 / r1 + 1 / r2 + 1e-6);
    const lowest = x(22.8, -13.2, 10100, 19600);
    const highest = x(25.2, -10.8, 9900, 20400);
    expect(Math.min(...out)).toBeCloseTo(lowest, 6);
    expect(Math.max(...out)).toBeCloseTo(highest, 6);
  });

  it('gives a section its perveance factor through the solver’s variation, leaving the design as it was', () => {
    const t = design(`rail bp = 24 V
rail bias = -12 V
type T like "12AU7" { spread = 20 % }
stage q { tube T; load 100 k to bp; input gnd direct }`);
    const p = designParameters(t).find((x) => x.kind === 'perveance');
    expect(p).toMatchObject({ id: 'P:q.v1', low: 0.8, high: 1.2 });
    const weak = applyParameters(t, new Map([['P:q.v1', 0.8]]));
    expect(weak.variation.get('q.v1')?.perveance).toBe(0.8);
    const nominal = solveOperatingPoint(t);
    const aged = solveOperatingPoint(weak.design, { variation: weak.variation });
    if (!('nodes' in nominal) || !('nodes' in aged)) throw new Error('no solve');
    expect(aged.nodes.get('q')!).toBeGreaterThan(nominal.nodes.get('q')!);
  });

  it('refuses exhaustive corners past 16 parameters', () => {
    const many = Array.from({ length: 17 }, (_, i) => ({ id: `R:${i}`, kind: 'resistor' as const, target: `${i}`, nominal: 1, low: 0.9, high: 1.1 }));
    expect(() => corners(many).next()).toThrow(RangeError);
  });
});
