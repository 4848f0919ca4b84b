import { describe, expect, it } from 'vitest';
import { solveOperatingPoint, triggerMargin, type Design } from '../../lib/index.js';
import { design } from '../helpers.js';

const latch = (setSeries: string) =>
  design(`rail bp = 24 V
rail bias = -12 V
defaults { tube = "6AU6" }
drive SET (set) -12 V
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q series 220 k pulldown 220 k to bias; input set series ${setSeries} pulldown 220 k to bias }`);

const holdsHigh = (d: Design, level: number) => {
  const withSet: Design = { ...d, parts: d.parts.map((p) => (p.type === 'drive' && p.node === 'set' ? { ...p, volts: level } : p)) };
  const op = solveOperatingPoint(withSet, { hints: [{ net: 'nq', high: true }] });
  if (!('nodes' in op)) throw new Error('no solve');
  return op.hints[0]!.held;
};

describe('switching a latch with its set input', () => {
  it('finds the set level where the old state stops existing, and the solver agrees on either side of it', () => {
    const d = latch('220 k');
    const r = triggerMargin(d, { latch: ['q', 'nq'], input: 'set', leaves: 'nq', quiet: -12, asserted: 24 });
    expect(r.switches).toBe(true);
    expect(r.threshold).toBeGreaterThan(-12);
    expect(r.threshold).toBeLessThan(24);
    expect(r.triggerMargin).toBeCloseTo(24 - r.threshold!, 9);
    expect(holdsHigh(d, r.threshold! - 0.05)).toBe(true);
    expect(holdsHigh(d, r.threshold! + 0.05)).toBe(false);
  });

  it('says a set input fed through too large a resistor cannot switch the latch', () => {
    const r = triggerMargin(latch('22 M'), { latch: ['q', 'nq'], input: 'set', leaves: 'nq', quiet: -12, asserted: 24 });
    expect(r).toEqual({ switches: false, threshold: undefined, triggerMargin: undefined });
  });

  it('still converges when the hinted state is torn away, where the other hint lands (Kirchhoff\'s current law, one solution)', () => {
    // At +120 V on the set input the latch has one state left. Pinning nq high cannot settle,
    // but the released circuit must, and must land where a solve hinted the other way lands:
    // Kirchhoff's current law has one solution here (a monostable circuit).
    const d = latch('220 k');
    const withSet: Design = { ...d, parts: d.parts.map((p) => (p.type === 'drive' && p.node === 'set' ? { ...p, volts: 120 } : p)) };
    const torn = solveOperatingPoint(withSet, { hints: [{ net: 'nq', high: true }] });
    const agreed = solveOperatingPoint(withSet, { hints: [{ net: 'nq', high: false }] });
    if (!('nodes' in torn) || !('nodes' in agreed)) throw new Error('no solve');
    expect(torn.converged).toBe(true);
    expect(torn.residualAmps).toBeLessThan(1e-9);
    expect(torn.hints[0]!.held).toBe(false);
    for (const [net, v] of agreed.nodes) expect(torn.nodes.get(net)).toBeCloseTo(v, 6);
  });
});
