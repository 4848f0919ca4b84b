import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { findScenario, loadDesign, type Design, type Rail } from '../../lib/index.js';
import { MAX_SPLIT_RAILS, railBoxes } from '../../lib/analysis/railBoxes.js';
import { ROOT, checkOf, memoryLoader, netsFiles } from '../helpers.js';

const range = (r: Rail): [number, number] => [Math.min(r.volts * (1 - r.tol), r.volts * (1 + r.tol)), Math.max(r.volts * (1 - r.tol), r.volts * (1 + r.tol))];

describe('rail boxes', () => {
  // A bound over every piece of a subdivision of a box bounds the whole box (interval
  // analysis: R. E. Moore, "Interval Analysis", 1966, on subdividing to narrow a range):
  // the pieces must cover the range, and reach nowhere outside it.
  it('cover each split rail range exactly, by halves meeting at its nominal value', () => {
    fc.assert(
      fc.property(fc.array(fc.record({ volts: fc.double({ min: -400, max: 400, noNaN: true }), tol: fc.double({ min: 0, max: 0.3, noNaN: true }) }), { minLength: 1, maxLength: 5 }), (specs) => {
        const rails = specs.map((s, i) => ({ name: `r${i}`, volts: s.volts, tol: s.tol, sourceOhms: 0 }));
        const boxes = railBoxes({ rails });
        const split = rails.filter((r) => r.tol > 0 && r.volts !== 0);
        expect(boxes.length).toBe(split.length === 0 ? 0 : 2 ** Math.min(split.length, MAX_SPLIT_RAILS));
        for (const [i, r] of rails.entries()) {
          const [lo, hi] = range(r);
          const pieces = boxes.map((b) => range(b.rails[i]!)).sort((a, b) => a[0] - b[0]);
          if (pieces.length === 0) continue;
          const halved = pieces.some((p) => p[1] - p[0] < (hi - lo) * 0.75);
          for (const p of pieces) {
            expect(p[0]).toBeGreaterThanOrEqual(lo - 1e-9 * Math.max(1, Math.abs(lo)));
            expect(p[1]).toBeLessThanOrEqual(hi + 1e-9 * Math.max(1, Math.abs(hi)));
          }
          expect(pieces[0]![0]).toBeCloseTo(lo, 9);
          expect(pieces.at(-1)![1]).toBeCloseTo(hi, 9);
          // No gap: each piece starts where one before it ends (or earlier).
          let reach = pieces[0]![1];
          for (const p of pieces.slice(1)) {
            expect(p[0]).toBeLessThanOrEqual(reach + 1e-9 * Math.max(1, Math.abs(reach)));
            reach = Math.max(reach, p[1]);
          }
          if (halved) expect(pieces.some((p) => Math.abs(p[1] - r.volts) < 1e-9 * Math.max(1, Math.abs(r.volts)))).toBe(true);
        }
      }),
    );
  });

  it("decide the crate tally's aged copy and carry nets: a margin its whole-range bound missed, kept over each half of the supply ranges", () => {
    const file = 'nets/crate-tally.tube';
    const text = readFileSync(join(ROOT, file), 'utf8');
    const d: Design = loadDesign(file, text, { loader: memoryLoader({ ...netsFiles(), [file]: text }) }).design!;
    const scenario = findScenario('aged')!;
    const whole = checkOf(d, { scenario, refine: false }).nets.find((n) => n.name === 'bc[0]')!;
    // Over the whole range of hv the low level's bound takes hv high and VIL's takes it low.
    expect(whole.status).toBe('fail');
    expect(whole.margin.low!).toBeLessThan(5);
    const r = checkOf(d, { scenario });
    const bc = r.nets.find((n) => n.name === 'bc[0]')!;
    expect(bc.status).toBe('pass');
    expect(bc.basis).toBe('bounds');
    expect(bc.note).toMatch(/^bounded with rails hv and neg over the whole of their ranges at once, NM_L is 4\.\d\d V: .* each half of their ranges in turn \(4 cases\), it keeps the required margin, NM_L 5\.\d\d V at worst$/);
    // Each input's own margin is the worst over the boxes too, and the net's is the least of them
    // (the worst VIL and the worst low level may come from different boxes: their difference is no margin shown).
    const inputs = bc.receivers.map((x) => x.boxMargins!.low!);
    expect(Math.min(...inputs)).toBeCloseTo(bc.margin.low!, 9);
    for (const m of inputs) expect(m).toBeGreaterThanOrEqual(r.requiredMargin);
    // A net the boxes leave short is searched on the whole design as far as the budget goes,
    // and says what it found beside its bound, not that nothing was tried.
    const open = r.nets.find((n) => n.name === 'boff[0]')!;
    expect(open.status).toBe('undecided');
    expect(open.reasons[0]).toMatch(/^undecided: no corner searched fails it \([\d,]+ solved; worst low found \d+\.\d\d V, bound \d+\.\d\d V\)/);
    expect(open.found!.low!).toBeLessThanOrEqual(open.low!.worst + 1e-9);
    expect(bc.margin.low!).toBeGreaterThanOrEqual(r.requiredMargin);
    // Tighter than the whole-range bound, never looser: each box's bound lies inside it.
    expect(bc.margin.low!).toBeGreaterThan(whole.margin.low!);
    expect(bc.low!.worst).toBeLessThanOrEqual(whole.low!.worst + 1e-9);
    expect(bc.receivers[0]!.vilMin!).toBeGreaterThanOrEqual(whole.receivers[0]!.vilMin! - 1e-9);
  });
});
