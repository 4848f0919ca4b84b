import { describe, expect, it } from 'vitest';
import { highest, largestMagnitude, lowest } from '../../lib/lists.js';
import { fitReadings, type Reading } from '../../lib/index.js';
import { MAX_READINGS } from '../../lib/models/fit.js';

// Spreading a long list into Math.min/Math.max overflows V8's call stack (about 10⁵
// arguments): a run in time of 100 ms records more time points than that, and a readings
// file of 200,000 rows holds more readings.
describe('lists longer than a call can take as arguments', () => {
  it('finds the extremes of 300,000 numbers, and agrees with Math.min/Math.max on short lists', () => {
    const xs = Float64Array.from({ length: 300_000 }, (_, i) => Math.sin(i) * 100);
    xs[123_456] = -1000;
    xs[222_222] = 1000;
    expect(lowest(xs)).toBe(-1000);
    expect(highest(xs)).toBe(1000);
    for (const list of [[], [1], [3, -2, 7], [0, NaN, 1]]) {
      expect(lowest(list)).toBe(Math.min(...list));
      expect(highest(list)).toBe(Math.max(...list));
      expect(largestMagnitude(list)).toBe(Math.max(0, ...list.map(Math.abs)));
    }
    expect(largestMagnitude(xs)).toBe(1000);
  });

  it('refuses 200,000 readings at once, without overflowing the stack, and fits the most it takes', () => {
    // Points on the 3/2-power law itself, so the fit is exact (Child–Langmuir law).
    const readings: Reading[] = [];
    for (let i = 0; readings.length < 200_000; i++) {
      const vg = -2 + (i % 5) * 0.5;
      const va = 20 + (Math.floor(i / 5) % 9) * 10;
      readings.push({ tube: 'A', plateVolts: va, gridVolts: vg, plateAmps: 1e-3 * Math.max(0, vg + va / 20) ** 1.5 * Math.tanh(va) });
    }
    const r = fitReadings(readings, 'child-langmuir');
    expect('refusal' in r && r.refusal).toMatch(/at most 5000/);
    const most = fitReadings(readings.slice(0, MAX_READINGS), 'child-langmuir');
    expect('fit' in most).toBe(true);
  });
});
