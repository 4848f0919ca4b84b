import { describe, expect, it } from 'vitest';
import { solveOperatingPoint } from '../../lib/index.js';
import { runCommand } from '../cliRun.js';
import { design } from '../helpers.js';

// A chain of N inverters from a switched input: each stage's state hangs on the one before.
const chain = (n: number) => `rail bp = 24 V
rail bias = -12 V
defaults { tube = "6AU6" }
block inv (a, y) {
  stage y { load 33 k to bp; screen bp; input a series 220 k pulldown 220 k to bias }
}
switch S (n[0], bp)
resistor R (n[0], bias) 100 k
instance g[i in 1..${n}] of inv (a: n[i - 1], y: n[i])
`;

describe('designs that are valid but odd get an answer, never an internal error', () => {
  it('solves a chain of 1,000 inverters, alternating low and high as the logic says (common practice, no source)', () => {
    const op = solveOperatingPoint(design(chain(1000)));
    if (!('nodes' in op)) throw new Error('no circuit');
    expect(op.converged).toBe(true);
    // n[0] sits low (S open, pulled to bias): n[1] high, n[2] low, …
    for (const i of [1, 2, 3, 500, 999, 1000]) expect((op.nodes.get(`n[${i}]`)! > 12) === (i % 2 === 1), `n[${i}]`).toBe(true);
  });

  it('checks the 100-stage chain with every rail current measured, no NaN', async () => {
    const r = await runCommand(['check', 'chain.tube'], { 'chain.tube': chain(100) });
    expect([0, 1]).toContain(r.code);
    expect(r.out).not.toMatch(/NaN|Infinity/);
    expect(r.out).toMatch(/Rails at the nominal operating point: bp /);
  });

  it('judges a plate joined by a closed switch to a net a button pulls to a rail, without an internal error', async () => {
    const text = `rail bp = 100 V
rail bias = -30 V
resistor R (x, gnd) 100 k
stage n { tube "12AU7"; load 1 M to bp; input x series 100 k }
switch S (a, n) closed
button B (a, bias)
`;
    for (const args of [['check', 'd.tube'], ['check', 'd.tube', '--json'], ['sweep', 'd.tube', '--rail', 'bp=90:110:10'], ['step', 'd.tube', '--sequence', 'press B; release B']]) {
      const r = await runCommand(args, { 'd.tube': text });
      expect([0, 1, 2], args.join(' ')).toContain(r.code);
      expect(r.err + r.out).not.toMatch(/internal error|NaN|Infinity/);
    }
  });
});
