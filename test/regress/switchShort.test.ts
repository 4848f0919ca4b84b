import { describe, expect, it } from 'vitest';
import { runCommand } from '../cliRun.js';
import { codes, load } from '../helpers.js';

// Two ideal voltage sources at different voltages joined by an ideal contact have no DC
// solution (Kirchhoff's voltage law around the loop cannot hold): common practice, no source.
const STIFF_DRIVE = `rail bp = 24 V
rail bias = -12 V
drive D (a) 24 V
button B (a, gnd)
stage q { tube "6AU6"; load 33 k to bp; screen bp; input a series 220 k pulldown 220 k to bias }
resistor RQ (q, gnd) 1 M
`;

describe('a contact that would short two stiff sources is a wiring error at the contact', () => {
  it('names the button, the drive and ground, at the button', () => {
    const errs = load(STIFF_DRIVE).diagnostics.filter((d) => d.severity === 'error');
    expect(codes(errs)).toEqual(['short-circuit']);
    expect(errs[0]!.message).toBe("pressing button 'B' would short drive 'D' (24 V) to ground (0 V)");
    expect(errs[0]!.span?.start.line).toBe(4);
  });

  it('gives exit 2 and a diagnostic, never an internal error, in every command that reads the design', async () => {
    const files = { 'd.tube': STIFF_DRIVE };
    for (const args of [['check', 'd.tube'], ['report', 'd.tube', '-o', 'x.html'], ['step', 'd.tube', '--sequence', 'press B'], ['sweep', 'd.tube', '--rail', 'bp=20:24:2'], ['solve', 'd.tube']]) {
      const r = await runCommand(args, files);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err, args.join(' ')).toContain('d.tube:4:1: error');
      expect(r.err).not.toContain('internal error');
    }
  });

  it('accepts the same button once the drive has a source resistance', () => {
    expect(load(STIFF_DRIVE.replace('24 V\nbutton', '24 V source 4.7 k\nbutton')).diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  });
});
