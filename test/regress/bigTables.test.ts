import { describe, expect, it } from 'vitest';
import { runCommand } from '../cliRun.js';

// A table of 150,000 rows: pushing its rows as the arguments of one call overflows V8's
// stack (about 10⁵ arguments); the tool must print it.
describe('a design with more parts than a call takes arguments', () => {
  it('prints the solve of 150,000 resistors', async () => {
    // Two arrays: one may hold at most 100,000 copies.
    const text = `rail bp = 24 V\nblock r (a) { resistor R (a, gnd) 1 M }\nresistor RT (bp, x) 1 k\ninstance u[i in 1..75000] of r (a: x)\ninstance w[i in 1..75000] of r (a: x)\n`;
    const r = await runCommand(['solve', 'big.tube'], { 'big.tube': text });
    expect(r.err).not.toContain('internal error');
    expect(r.code).toBe(0);
    expect(r.out).toContain('Resistors (150001)');
  }, 120_000);
});
