import { describe, expect, it } from 'vitest';
import { heaterEmission, sweepRails } from '../../lib/index.js';
import { design } from '../helpers.js';

describe('supply sweeps', () => {
  it("put a resistor-only input's boundary where the closed form does: open, it reads low while bias < −bp", () => {
    // Open, the input sits at (R2·bias + R1·bp)/(R1 + R2) = (bias + 3·bp)/4 with R1 = 300 kΩ to bias
    // and R2 = 100 kΩ to bp; it reads low below half its pull-up rail, bp/2: so while bias < −bp (Ohm's law).
    const d = design(`rail bp = 15 V
rail bias = -20 V
switch S (a, bp) open
resistor R1 (a, bias) 300 k tol 0 %
resistor R2 (a, bp) 100 k tol 0 %`);
    const r = sweepRails(d, { axes: [{ rail: 'bp', from: 10, to: 20, step: 1 }, { rail: 'bias', from: -30, to: -2, step: 2 }] });
    if (!('grid' in r)) throw new Error('no sweep');
    let compared = 0;
    r.axes[1]!.values.forEach((bias, j) =>
      r.axes[0]!.values.forEach((bp, i) => {
        if (Math.abs(bias + bp) < 1e-6) return; // on the boundary itself the answer rests on rounding
        expect(r.grid[j]![i]!.pass, `bp ${bp} V, bias ${bias} V`).toBe(bias < -bp);
        compared++;
      }),
    );
    expect(compared).toBeGreaterThan(100);
    // Through the nominal point (bp 15 V, bias −20 V): bp passes up to 20 V (its boundary, 20 V, on the edge), bias up to −16 V.
    const [bp, bias] = r.window;
    expect(bp!.low).toBe(10);
    expect(bp!.high).toBeGreaterThanOrEqual(19);
    expect([bias!.low, bias!.high]).toEqual([-30, -16]);
  });

  it('lower the emission of every tube with the heaters: 90 % of the heater voltage gives 81 %', () => {
    expect(heaterEmission(0.9)).toBeCloseTo(0.81, 12);
  });

  it('refuse a rail the design lacks and a sweep that runs downwards, with diagnostics', () => {
    const d = design(`rail bp = 24 V
resistor R (bp, gnd) 1 k`);
    const r = sweepRails(d, { axes: [{ rail: 'hv', from: 0, to: 10, step: 1 }, { rail: 'bp', from: 30, to: 20, step: 1 }] });
    expect('diagnostics' in r && r.diagnostics.map((x) => x.code)).toEqual(['sweep-range', 'sweep-range']);
  });
});
