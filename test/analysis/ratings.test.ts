import { describe, expect, it } from 'vitest';
import { applyParameters, buildStageGraph, corners, DERATING, designParameters, solveOperatingPoint } from '../../lib/index.js';
import { checkOf, design } from '../helpers.js';

describe('ratings and budgets', () => {
  it("give a resistor-only design's powers and rail current as Ohm's law does by hand", () => {
    // 24 V across 10 kΩ + 10 kΩ (1.2 mA, 14.4 mW each) and across 1 kΩ (24 mA, 576 mW), from one rail: 25.2 mA, 604.8 mW.
    const d = design(`rail bp = 24 V
resistor R1 (bp, a) 10 k tol 0 % rating 0.25 W
resistor R2 (a, gnd) 10 k tol 0 % rating 0.25 W
resistor R3 (bp, gnd) 1 k tol 0 % rating 1 W`);
    const g = checkOf(d, { ratings: true }).ratings!;
    const watts = Object.fromEntries(g.resistors.map((r) => [r.resistor, r.watts]));
    expect(watts.R1).toBeCloseTo(0.0144, 9);
    expect(watts.R2).toBeCloseTo(0.0144, 9);
    expect(watts.R3).toBeCloseTo(0.576, 9);
    expect(g.rails).toEqual([{ rail: 'bp', volts: 24, amps: expect.closeTo(0.0252, 9), watts: expect.closeTo(0.6048, 9) }]);
    // 576 mW is more than half of 1 W: over the derating, and the check fails for it.
    expect(g.resistors.find((r) => r.resistor === 'R3')).toMatchObject({ ok: false });
    expect(DERATING).toBe(0.5);
    expect(checkOf(d, { ratings: true }).verdict).toBe('fail');
  });

  it("budget the heaters of the library's types: 12AU7 sections two to an envelope at 12.6 V, 150 mA (handbook, from memory)", () => {
    const d = design(`rail bp = 150 V
rail bias = -75 V
defaults { tube = "12AU7" }
stage q  { load 47 k to bp; input nq series 470 k pulldown 390 k to bias }
stage nq { load 47 k to bp; input q  series 470 k pulldown 390 k to bias }
stage r  { load 47 k to bp; input q  series 470 k pulldown 390 k to bias }`);
    const h = checkOf(d, { ratings: true }).ratings!.heaters;
    expect(h).toHaveLength(1);
    // Three sections need two envelopes; across 150 V, two 12.6 V heaters make one string, with (150 − 25.2) V / 150 mA dropped.
    expect(h[0]).toMatchObject({ designation: '12AU7', envelopes: 2, volts: 12.6, amps: 0.15 });
    expect(h[0]!.strings[0]).toMatchObject({ rail: 'bp', perString: 2, strings: 1, droppingOhms: expect.closeTo((150 - 25.2) / 0.15, 6) });
  });

  it('find the worst-case plate dissipation of a latch section within 2 % of the largest over every corner of the whole circuit (the exhaustive oracle)', () => {
    const d = design(`rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "6AU6", tolerance = 5 % }
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias }`);
    const g = checkOf(d, { ratings: true }).ratings!;
    const q = g.sections.find((s) => s.section === 'q.v1')!;
    const graph = buildStageGraph(d);
    const nominal = solveOperatingPoint(d, { graph, hints: [{ net: 'q', high: false }] });
    if (!('nodes' in nominal)) throw new Error('no solve');
    let most = 0;
    for (const corner of corners(designParameters(d))) {
      const v = applyParameters(d, corner);
      const op = solveOperatingPoint(v.design, { graph, variation: v.variation, start: nominal.x });
      if ('nodes' in op && op.converged) most = Math.max(most, op.tubes.find((t) => t.name === 'q.v1')!.plateWatts);
    }
    expect(q.plateWatts).toBeGreaterThanOrEqual(most * 0.98);
    // And within what a load line can give at all: (24·1.05)²/(4·33 kΩ·0.95) (Ohm's law).
    expect(q.plateWatts).toBeLessThanOrEqual((24 * 1.05) ** 2 / (4 * 33e3 * 0.95) + 1e-9);
  });
});
