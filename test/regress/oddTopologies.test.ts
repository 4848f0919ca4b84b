import { describe, expect, it } from 'vitest';
import { reproduceWitness, solveOperatingPoint } from '../../lib/index.js';
import { runCommand } from '../cliRun.js';
import { checkOf, design } from '../helpers.js';

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

describe("levels a net can take, in designs whose stages have an input or cathode tied to a rail", () => {
  // `tied`'s grid is fed from B+ only: its section always conducts, so `tied` is never
  // high. `odd`'s cathode sits on the bias rail, so its section conducts whatever its
  // input: its "high" is the level it really takes with its input low (a witness shows it).
  const text = `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "6AU6" }
button A (ia, bp)
resistor RA (ia, bias) 100 k
stage buf { load 33 k to bp; screen bp; input ia series 220 k pulldown 220 k to bias }
stage odd { load 33 k to bp; screen bp; cathode bias; input buf series 220 k pulldown 220 k to bias }
stage tied { load 33 k to bp; screen bp; input bp series 220 k pulldown 220 k to bias }
stage after { load 33 k to bp; screen bp; input odd series 220 k pulldown 220 k to bias; input tied series 220 k pulldown 220 k to bias }
`;

  it('gives a net whose only section always conducts no high level, and no rail end for a level it never reaches', () => {
    const d = design(text);
    const r = checkOf(d);
    const net = (name: string) => r.nets.find((n) => n.name === name)!;
    expect(net('tied').high).toBeUndefined();
    expect(net('tied').status).toBe('pass');
    // No level is the bias rail's far end (−12.6 V), which no net here reaches (the whole
    // circuit's span at every corner: the level of a node lies between the rails, DC).
    for (const n of r.nets) for (const l of [n.high, n.low]) if (l) expect(Math.abs(l.worst + 12.6), n.name).toBeGreaterThan(0.05);
    // Every failure is shown at a corner where the whole design fails.
    for (const n of r.nets.filter((x) => x.status === 'fail')) expect(n.witness && reproduceWitness(d, n.witness).reproduced, n.name).toBe(true);
  });

  it('names as a cause only levels within what the named net can take', () => {
    const d = design(text);
    const r = checkOf(d);
    for (const n of r.nets) {
      for (const c of n.weakest?.causes ?? []) {
        if (c.kind !== 'level') continue;
        const t = r.nets.find((x) => x.name === c.target)!;
        const ends = [t.high?.worst, t.low?.worst, t.high?.nominal, t.low?.nominal].filter((x): x is number => x !== undefined);
        expect(c.value, `${n.name}: ${c.target}`).toBeGreaterThanOrEqual(Math.min(...ends) - 1e-6);
        expect(c.value, `${n.name}: ${c.target}`).toBeLessThanOrEqual(Math.max(...ends) + 1e-6);
      }
    }
  });
});
