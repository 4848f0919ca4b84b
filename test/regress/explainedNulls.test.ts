import { describe, expect, it } from 'vitest';
import { WHY_SUFFIX } from '../../lib/index.js';
import { runCommand } from '../cliRun.js';

/** Every null in `value` with no non-empty `<key>Why` beside it, as JSON paths. */
function unexplainedNulls(value: unknown, path = ''): string[] {
  if (Array.isArray(value)) return value.flatMap((v, i) => unexplainedNulls(v, `${path}[${i}]`));
  if (value === null || typeof value !== 'object') return [];
  const o = value as Record<string, unknown>;
  return Object.entries(o).flatMap(([k, v]) => {
    if (v === null) return typeof o[k + WHY_SUFFIX] === 'string' && (o[k + WHY_SUFFIX] as string).length > 0 ? [] : [`${path}.${k}`];
    return unexplainedNulls(v, `${path}.${k}`);
  });
}

// A latch set by a button, an inverter that feeds nothing, triodes (no screen): a design
// with every kind of figure that does not exist — a net never high, a margin with no
// receiver, an input with no cutoff, a section with no screen.
const ODD = `rail bp = 150 V
rail bias = -50 V
button B (s, bp)
resistor RS (s, bias) 100 k
stage q  { tube "12AU7"; load 47 k to bp; input nq series 470 k pulldown 470 k to bias; input s series 470 k pulldown 470 k to bias }
stage nq { tube "12AU7"; load 47 k to bp; input q series 470 k pulldown 470 k to bias }
stage y  { tube "12AU7"; load 47 k to bp; input q series 470 k pulldown 470 k to bias }
`;

describe('no NaN, Infinity or unexplained null in any output', () => {
  const files = { 'odd.tube': ODD };
  for (const args of [
    ['solve', 'odd.tube', '--json'],
    ['check', 'odd.tube', '--json'],
    ['check', 'odd.tube', '--json', '--samples', '20', '--workers', '1'],
    ['sweep', 'odd.tube', '--rail', 'bp=140:160:10', '--json'],
  ]) {
    it(`explains every null of ${args.join(' ')}`, async () => {
      const r = await runCommand(args, files);
      expect([0, 1]).toContain(r.code);
      expect(r.out).not.toMatch(/NaN|Infinity/);
      expect(unexplainedNulls(JSON.parse(r.out))).toEqual([]);
    });
  }

  it('says in words, not NaN, what check could not measure', async () => {
    for (const args of [['check', 'odd.tube'], ['solve', 'odd.tube'], ['sweep', 'odd.tube', '--rail', 'bp=140:160:10']]) {
      const r = await runCommand(args, files);
      expect(r.out + r.err).not.toMatch(/NaN|Infinity/);
    }
  });
});

describe('a verdict that fails only on ratings says so', () => {
  it('does not print "0 of N nets fail" under FAIL when every net passes and a part runs over its rating', async () => {
    // 1 kΩ across 150 V takes 22.5 W, far over a 0.5 W rating (Joule's law, P = V²/R).
    const text = `rail bp = 150 V\nrail bias = -50 V\nresistor HOT (bp, gnd) 1 k\nbutton B (s, bp)\nresistor RS (s, bias) 100 k\nstage y { tube "12AU7"; load 47 k to bp; input s series 470 k pulldown 470 k to bias }\nresistor RY (y, gnd) 1 M\n`;
    const r = await runCommand(['check', 'd.tube'], { 'd.tube': text });
    expect(r.code).toBe(1);
    expect(r.out).not.toMatch(/FAIL: 0 of/);
    expect(r.out).toMatch(/FAIL: every net keeps .* but parts run over their ratings/s);
  });
});
