import { describe, expect, it } from 'vitest';
import { loadDesign, parseSequence, stepDesign } from '../../lib/index.js';
import { design, memoryLoader, netsFiles } from '../helpers.js';
import { runCommand as run } from '../cliRun.js';
import { twoRailButtonsText } from './oracle.js';

const demo = (file: string) => {
  const files = netsFiles();
  return loadDesign(file, files[file]!, { loader: memoryLoader(files) }).design!;
};

/**
 * A four-bit two-phase shift register (a test fixture of our own): phase A copies the
 * data switch into buffer 0 and each position into the next buffer, phase B copies each
 * buffer into its position. One clock can flip neighbouring positions in opposite
 * directions at once, the case a stepper that searches for flips finds hardest.
 */
const SHIFT_REGISTER = `include "lib/demo-tubes.tube"
rail hv  = 150 V tol 5 %
rail neg = -75 V tol 5 %
defaults { tolerance = 5 %; tube = SURPLUS_TRIODE }
let rl = 47 k
let rs = 470 k
let rp = 390 k
block latch2 (set, clr, q, nq) {
  stage q  { load rl to hv; input nq series rs pulldown rp to neg; input clr series rs pulldown rp to neg }
  stage nq { load rl to hv; input q  series rs pulldown rp to neg; input set series rs pulldown rp to neg }
}
block copy (phase_n, d_on, d_off, set, clr) {
  stage set { load rl to hv; input phase_n series rs pulldown rp to neg; input d_off series rs pulldown rp to neg }
  stage clr { load rl to hv; input phase_n series rs pulldown rp to neg; input d_on  series rs pulldown rp to neg }
}
button DATA (din, hv)
resistor RD (din, neg) 220 k
stage din_n { load rl to hv; input din series rs pulldown rp to neg }
stage din_p { load rl to hv; input din_n series rs pulldown rp to neg }
instance pos[i in 0..3] of latch2 (set: ps[i], clr: pc[i], q: on[i], nq: off[i])
instance buf[i in 0..3] of latch2 (set: bs[i], clr: bc[i], q: bon[i], nq: boff[i])
instance a0 of copy (phase_n: pa_n, d_on: din_p, d_off: din_n, set: bs[0], clr: bc[0])
instance a[i in 1..3] of copy (phase_n: pa_n, d_on: on[i - 1], d_off: off[i - 1], set: bs[i], clr: bc[i])
instance b[i in 0..3] of copy (phase_n: pb_n, d_on: bon[i], d_off: boff[i], set: ps[i], clr: pc[i])
drive LINE_A (pa_n) 150 V source 4.7 k
drive LINE_B (pb_n) 150 V source 4.7 k
button PHASE_A (pa_n, gnd)
button PHASE_B (pb_n, gnd)`;

describe('stepping a design through its inputs', () => {
  it('counts the crate tally round its ten positions, one per two-phase clock, as the logic says it must', () => {
    const positions = Array.from({ length: 10 }, (_, i) => `on[${i}]`);
    const lines = ['pulse RESET', `expect ${positions.map((p, i) => `${p}=${i === 0 ? 1 : 0}`).join(' ')}`];
    for (let k = 1; k <= 10; k++) lines.push('pulse PHASE_A', 'pulse PHASE_B', `expect ${positions.map((p, i) => `${p}=${i === k % 10 ? 1 : 0}`).join(' ')}`);
    const seq = parseSequence('count.seq', lines.join('\n'));
    expect(seq.diagnostics).toEqual([]);
    const r = stepDesign(demo('nets/crate-tally.tube'), seq.value, { nets: positions });
    if (!('rows' in r)) throw new Error(r.diagnostics.map((d) => d.message).join('; '));
    const failed = r.rows.flatMap((row, i) => row.expected.filter((e) => !e.ok).map((e) => `step ${i} ${row.action}: ${e.net}`));
    expect(failed).toEqual([]);
    expect(r.rows.every((row) => row.converged)).toBe(true);
    expect(r.ok).toBe(true);
  }, 60_000);

  it('shifts a data pattern through a four-bit register exactly as the shift-register logic says (common practice, no source)', () => {
    const files = netsFiles();
    const d = design(SHIFT_REGISTER, { 'lib/demo-tubes.tube': files['nets/lib/demo-tubes.tube']! });
    const data = [1, 0, 1, 1, 0, 0, 1, 0, 1];
    // The reference: after clock k, position i holds the bit shifted in at clock k - i;
    // positions not yet reached by shifted data are not asked about.
    const lines: string[] = [];
    const shifted: number[] = [];
    for (const [k, bit] of data.entries()) {
      lines.push(`${bit ? 'press' : 'release'} DATA`, 'pulse PHASE_A', 'pulse PHASE_B');
      shifted.unshift(bit);
      lines.push(`expect ${shifted.slice(0, 4).map((b, i) => `on[${i}]=${b}`).join(' ')}`);
      expect(shifted.length).toBe(k + 1);
    }
    const seq = parseSequence('shift.seq', lines.join('\n'));
    expect(seq.diagnostics).toEqual([]);
    const r = stepDesign(d, seq.value, { nets: ['on[0]', 'on[1]', 'on[2]', 'on[3]'] });
    if (!('rows' in r)) throw new Error(r.diagnostics.map((x) => x.message).join('; '));
    const failed = r.rows.flatMap((row, i) => row.expected.filter((e) => !e.ok).map((e) => `step ${i} ${row.action}: ${e.net}`));
    expect(failed).toEqual([]);
    expect(r.rows.every((row) => row.converged)).toBe(true);
    // Opposite flips in one phase did happen: 1,0,1,1 then 0 makes 0110 from 1101.
    const states = r.rows.map((row) => row.states.map((s) => (s.high ? '1' : '0')).join(''));
    expect(states).toContain('0110');
    expect(r.ok).toBe(true);
  }, 60_000);

  it('reports a step whose buttons short a net to two rails as unsolved, and carries on', () => {
    const d = design(twoRailButtonsText(''));
    const r = stepDesign(d, parseSequence('s', 'press UP; press DOWN; release UP; expect a=1').value, { nets: ['a'] });
    if (!('rows' in r)) throw new Error('no steps');
    expect(r.rows.map((row) => row.converged)).toEqual([true, true, false, true]);
    expect(r.rows[2]!.why).toMatch(/short circuit/);
    expect(r.rows[3]!.expected.every((e) => e.ok)).toBe(true);
    expect(r.ok).toBe(false);
  });

  it('sets and clears an irrigation zone with its Start and Stop buttons, the other zones untouched', () => {
    const seq = parseSequence('s', 'pulse STOP; expect bed[1]/on=0 bed[2]/on=0; pulse bed[2]/START; expect bed[1]/on=0 bed[2]/on=1; pulse STOP; expect bed[2]/on=0');
    const r = stepDesign(demo('nets/irrigation-sequencer.tube'), seq.value, { nets: ['bed[1]/on', 'bed[2]/on'] });
    if (!('rows' in r)) throw new Error('no steps');
    expect(r.ok).toBe(true);
  });

  it('solves a zone with Stop and Start held at once: both of its latch nets low, a state while they act, then Start wins on Stop\'s release', () => {
    // Set and clear asserted together pull both sides of a NOR latch low; releasing one
    // leaves the other in charge (common practice, no source).
    const seq = parseSequence('s', 'press STOP; press bed[1]/START; expect bed[1]/on=0 bed[1]/off=0; release STOP; expect bed[1]/on=1 bed[1]/off=0');
    const r = stepDesign(demo('nets/irrigation-sequencer.tube'), seq.value, { nets: ['bed[1]/on', 'bed[1]/off'] });
    if (!('rows' in r)) throw new Error('no steps');
    expect(r.rows.map((row) => row.converged)).toEqual([true, true, true, true]);
    expect(r.ok).toBe(true);
  });

  it('says where a sequence is wrong: a line that is no action, a part or a net the design lacks', () => {
    const bad = parseSequence('s.seq', 'press START\nwiggle STOP\nexpect on=2');
    expect(bad.diagnostics.map((d) => `${d.span!.start.line}:${d.span!.start.col} ${d.code}`)).toEqual(['2:1 sequence-syntax', '3:1 sequence-syntax']);
    const unknown = stepDesign(demo('nets/irrigation-sequencer.tube'), parseSequence('s', 'press NOPE; expect nowhere=1').value);
    expect('diagnostics' in unknown && unknown.diagnostics.map((d) => d.code)).toEqual(['unknown-part', 'unknown-net']);
  });

  it('says a sequence file it cannot read is missing, rather than reading its name as actions (exit 2)', async () => {
    const r = await run(['step', 'nets/irrigation-sequencer.tube', '--sequence', 'docs/examples/no-such.seq']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/cannot read the sequence file 'docs\/examples\/no-such\.seq'/);
    const text = await run(['step', 'nets/irrigation-sequencer.tube', '--sequence', 'wiggle STOP']);
    expect(text.err).toMatch(/1:1/);
  });

  it('exits 1 on the command line when an expectation does not hold, and prints the states', async () => {
    const r = await run(['step', 'nets/irrigation-sequencer.tube', '--sequence', 'pulse STOP; expect bed[1]/on=1', '--nets', 'bed[1]/on']);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/NOT bed\[1\]\/on=1/);
    for (const line of r.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
  });
});
