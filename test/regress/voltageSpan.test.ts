import { describe, expect, it } from 'vitest';
import { solveOperatingPoint } from '../../lib/index.js';
import { design } from '../helpers.js';

// The maximum principle of a resistive network: with passive elements only (resistors,
// diodes, plate currents that flow from plate to cathode), no node of a DC solution lies
// beyond the highest or lowest fixed voltage (a consequence of Kirchhoff's current law;
// e.g. any circuit-theory text on nodal analysis). Grid conduction with a negative onset is
// the one active element, bounded by |vgamma| ≤ 2 V.

const LATCH = `rail bp = 24 V
rail bias = -12 V
type LP like "6AU6" { vgamma = VG }
defaults { tube = LP }
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias }
`;

describe('every DC solution lies within the span of the fixed voltages', () => {
  it('keeps the grids of a latch with the most negative onset allowed (−2 V) within the rails widened by 2 V', () => {
    const d = design(LATCH.replace('VG', '-2 V'));
    const op = solveOperatingPoint(d);
    if (!('nodes' in op)) throw new Error('no circuit');
    expect(op.converged).toBe(true);
    for (const [net, v] of op.nodes) {
      expect(v, net).toBeGreaterThanOrEqual(-12 - 2.01);
      expect(v, net).toBeLessThanOrEqual(24 + 2.01);
    }
  });

  it('reports a solution that leaves the span as not converged, naming the nets, even for a model that skipped validation', () => {
    const d = design(LATCH.replace('VG', '0 V'));
    // What an unchecked library caller could pass: an onset of −20 V pulls the grids 20 V below the cathode.
    const bad = { ...d, models: d.models.map((m) => ({ ...m, vgamma: -20 })) };
    const op = solveOperatingPoint(bad);
    if (!('nodes' in op)) throw new Error('no circuit');
    expect(op.converged).toBe(false);
    const diag = op.diagnostics.find((x) => x.code === 'no-convergence');
    expect(diag?.message).toContain('span of the fixed voltages');
    expect(diag?.notes.join(' ')).toMatch(/q\.g1 at -1\d\.\d\d V/);
  });
});

describe('a screen at or below the cathode collects nothing', () => {
  it('leaves a pentode screen returned to ground at 0 V with its grid on the plate rail, instead of 810 V below it', () => {
    // Electrons reach an electrode only if it is positive to the cathode (Child and
    // Langmuir's space-charge law needs a positive accelerating voltage).
    const d = design('rail bp = 24 V\nsection V "6AU6" (bp, bp, gnd, s)\nresistor RS (s, gnd) 1 M\n');
    const op = solveOperatingPoint(d);
    if (!('nodes' in op)) throw new Error('no circuit');
    expect(op.converged).toBe(true);
    expect(Math.abs(op.nodes.get('s')!)).toBeLessThan(0.01);
    expect(op.tubes[0]!.screenAmps).toBeLessThanOrEqual(1e-9);
  });
});
