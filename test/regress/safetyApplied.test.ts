import { describe, expect, it } from 'vitest';
import { runCommand } from '../cliRun.js';

// 60 V DC is the usual extra-low-voltage limit for touch safety (common practice, no source):
// a level the run applies from outside counts as the design's own rails do.
const LOW = `rail bp = 24 V tol 5 %
rail bias = -12 V tol 5 %
defaults { tube = "6AU6" }
drive SETD (set) 0 V source 10 k
stage q  { load 33 k to bp; screen bp; input nq series 220 k pulldown 220 k to bias }
stage nq { load 33 k to bp; screen bp; input q  series 220 k pulldown 220 k to bias; input set series 220 k pulldown 220 k to bias }
`;

describe('the safety cautions count the levels a run applies', () => {
  it('cautions a pulse whose waveform reaches 400 V on a 24 V design, in text and JSON', async () => {
    const args = ['pulse', 'd.tube', '--for', '50us', '--input', 'SETD=pulse(0V, 400V, at=10us, width=10us)', '--nets', 'q,nq'];
    const text = await runCommand(args, { 'd.tube': LOW });
    expect(text.out).toContain('CAUTION: SETD (up to 400 V) exceeds 60 V.');
    const json = JSON.parse((await runCommand([...args, '--json'], { 'd.tube': LOW })).out);
    expect(json.cautions[0]).toContain('SETD (up to 400 V)');
  });

  it('cautions a step that sets a drive to 400 V, and names a negative rail with its sign', async () => {
    const r = await runCommand(['step', 'd.tube', '--sequence', 'set SETD = 400 V'], { 'd.tube': LOW });
    expect(r.out).toContain('CAUTION: SETD (up to 400 V)');
    const neg = await runCommand(['check', 'n.tube'], { 'n.tube': LOW.replace('-12 V', '-75 V') });
    expect(neg.out).toContain('bias (down to −78.8 V)');
  });

  it('gives no caution where every level stays within 60 V', async () => {
    const r = await runCommand(['step', 'd.tube', '--sequence', 'set SETD = 24 V'], { 'd.tube': LOW });
    expect(r.out).not.toContain('CAUTION');
  });
});
