import { describe, expect, it } from 'vitest';
import { codes, load } from '../helpers.js';

// Limits pushed past what anyone writes by hand: each must end in diagnostics, quickly.
describe('inputs built to be slow or deep', () => {
  it('answers a misspelt 60,000-letter name at once: no "did you mean" past 200 letters', () => {
    const name = 'a'.repeat(60_000);
    const start = performance.now();
    const r = load(`let ${name} = 1\nresistor R (x, gnd) ${name}b`);
    expect(performance.now() - start).toBeLessThan(2000);
    expect(codes(r.diagnostics.filter((d) => d.severity === 'error'))).toEqual(['unknown-name']);
  });

  it('still suggests the near name for a short misspelling', () => {
    const r = load('let rload = 33 k\nresistor R (x, gnd) rlaod');
    expect(r.diagnostics.find((d) => d.code === 'unknown-name')?.notes.join(' ')).toContain("did you mean 'rload'?");
  });

  it('reads a file of 10,000 stray closing braces as diagnostics, not a stack overflow', () => {
    const r = load('}'.repeat(10_000));
    expect(r.ok).toBe(false);
    expect(r.diagnostics.filter((d) => d.code === 'unexpected-token')).toHaveLength(10_000);
  });
});
