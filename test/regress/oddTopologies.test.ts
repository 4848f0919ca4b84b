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

describe('a plate tied by a closed switch to a stiff drive', () => {
  it('is judged (a failure to vouch for, with its reason), not an internal error, in check, sweep and report', async () => {
    const text = `rail bp = 150 V
rail bias = -50 V
resistor RX (x, bias) 100 k
drive D (a) -6 V
stage q { tube "12AU7"; load 47 k to bp; input x series 100 k pulldown 100 k to bias }
switch S (q, a) closed
`;
    for (const args of [['check', 'd.tube'], ['sweep', 'd.tube', '--rail', 'bp=100:140:10'], ['report', 'd.tube', '-o', 'x.html']]) {
      const r = await runCommand(args, { 'd.tube': text });
      expect([0, 1, 2], args.join(' ')).toContain(r.code);
      expect(r.err + r.out).not.toMatch(/internal error|NaN|Infinity/);
    }
  });
});

describe('kilovolt designs and designs without logic', () => {
  it('solves a 2.4 kV divider to Ohm\'s law: gmin\'s own nanoamp at a kilovolt must not stop it', async () => {
    const op = solveOperatingPoint(design('rail hv = 2400 V\nresistor R1 (hv, mid) 1 M rating 100 W\nresistor R2 (mid, gnd) 1 M rating 100 W\n'));
    if (!('nodes' in op)) throw new Error('no circuit');
    expect(op.converged).toBe(true);
    expect(op.nodes.get('mid')!).toBeCloseTo(1200, 6);
  });

  it('fails, not passes, a 5 kV divider whose 1 W resistors take 6.25 W each (Joule\'s law)', async () => {
    const r = await runCommand(['check', 'd.tube'], { 'd.tube': 'rail hv = 5000 V\nresistor R1 (hv, mid) 1 M rating 1 W\nresistor R2 (mid, gnd) 1 M rating 1 W\n' });
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/R1 takes up to 6\.\d+ W/);
  });

  it('skips --shrink and --samples with a note where there is no logic net, instead of an internal error', async () => {
    const r = await runCommand(['check', 'd.tube', '--shrink', '--samples', '20', '--workers', '1'], { 'd.tube': 'rail bp = 24 V\nresistor R1 (bp, gnd) 100 k\n' });
    expect(r.code).toBe(0);
    expect(r.err).toContain('--shrink skipped');
    expect(r.err).toContain('--samples skipped');
    expect(r.err).not.toContain('internal error');
  });
});
