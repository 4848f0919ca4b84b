import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { estimateTextWidth, spreadLabels, stackLabels } from '../../lib/report/labelLayout.js';

describe('placing the labels of guide lines', () => {
  it('puts labels along a line in the first row where they clear the one before', () => {
    expect(stackLabels([{ at: 0, width: 40 }, { at: 20, width: 40 }])).toEqual([0, 1]);
    expect(stackLabels([{ at: 0, width: 40 }, { at: 50, width: 40 }])).toEqual([0, 0]);
    // Given out of order, each keeps its own row: 'VIL' at 181 px goes above 'VOL in' at 172 px.
    expect(stackLabels([{ at: 181, width: 70 }, { at: 172, width: 80 }, { at: 269, width: 70 }])).toEqual([1, 0, 0]);
  });

  it('never lets two labels of one row overlap (fast-check, seed 17)', () => {
    const label = fc.record({ at: fc.integer({ min: 0, max: 400 }), width: fc.integer({ min: 1, max: 120 }) });
    fc.assert(
      fc.property(fc.array(label, { maxLength: 12 }), (labels) => {
        const rows = stackLabels(labels);
        for (let i = 0; i < labels.length; i++)
          for (let j = i + 1; j < labels.length; j++) {
            if (rows[i] !== rows[j]) continue;
            const [a, b] = [labels[i]!, labels[j]!];
            if (a.at < b.at + b.width + 4 && b.at < a.at + a.width + 4) return false;
          }
        return true;
      }),
      { seed: 17 },
    );
  });

  it('pushes labels in a column apart as little as they must, in their order, inside the column', () => {
    expect(spreadLabels([100, 104], 14, 0, 260)).toEqual([95, 109]);
    expect(spreadLabels([50, 200], 14, 0, 260)).toEqual([50, 200]);
    // Off the top: pushed down into the column.
    expect(spreadLabels([-3, 1], 14, 0, 260)).toEqual([0, 14]);
    // Given in either order, the lower value keeps the lower position.
    expect(spreadLabels([104, 100], 14, 0, 260)).toEqual([109, 95]);
  });

  it('keeps every two labels of a column at least the spacing apart (fast-check, seed 17)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -50, max: 300, noNaN: true }), { maxLength: 10 }), (at) => {
        const y = [...spreadLabels(at, 13, 0, 260)].sort((a, b) => a - b);
        return y.every((v, k) => k === 0 || v - y[k - 1]! >= 13 - 1e-9);
      }),
      { seed: 17 },
    );
  });

  it('estimates a label at least as wide as a broad serif face sets it (DejaVu Serif at 10 px, measured with getBBox in Chromium: 55.4 px and 80.8 px)', () => {
    expect(estimateTextWidth('VIL 8.21 V', 10)).toBeGreaterThanOrEqual(55.4);
    expect(estimateTextWidth('VOH in 22.80 V', 10)).toBeGreaterThanOrEqual(80.8);
    expect(estimateTextWidth('', 10)).toBe(0);
  });
});
