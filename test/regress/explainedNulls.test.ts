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
