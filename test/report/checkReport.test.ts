import { describe, expect, it } from 'vitest';
import { marginText } from '../../lib/report/checkReport.js';

describe('margins against the required one', () => {
  it('are never rounded onto the other side of it (a 1.496 V margin against 1.50 V once printed "1.50" beside FAIL)', () => {
    expect(marginText(1.496, 1.5)).toBe('1.496');
    expect(marginText(1.4996, 1.5)).toBe('1.4996');
    expect(marginText(1.5, 1.5)).toBe('1.50');
    expect(marginText(1.503, 1.5)).toBe('1.50');
    expect(marginText(2.345, 1.5)).toBe('2.35');
    expect(marginText(undefined, 1.5)).toBe('—');
  });
});
