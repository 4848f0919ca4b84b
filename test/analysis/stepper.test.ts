import { describe, expect, it } from 'vitest';
import { loadDesign, parseSequence, stepDesign } from '../../lib/index.js';
import { memoryLoader, netsFiles } from '../helpers.js';
import { runCommand as run } from '../cliRun.js';

const demo = (file: string) => {
  const files = netsFiles();
  return loadDesign(file, files[file]!, { loader: memoryLoader(files) }).design!;
};

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

  it('sets and clears an irrigation zone with its Start and Stop buttons, the other zones untouched', () => {
    const seq = parseSequence('s', 'pulse STOP; expect bed[1]/on=0 bed[2]/on=0; pulse bed[2]/START; expect bed[1]/on=0 bed[2]/on=1; pulse STOP; expect bed[2]/on=0');
    const r = stepDesign(demo('nets/irrigation-sequencer.tube'), seq.value, { nets: ['bed[1]/on', 'bed[2]/on'] });
    if (!('rows' in r)) throw new Error('no steps');
    expect(r.ok).toBe(true);
  });

  it('says where a sequence is wrong: a line that is no action, a part or a net the design lacks', () => {
    const bad = parseSequence('s.seq', 'press START\nwiggle STOP\nexpect on=2');
    expect(bad.diagnostics.map((d) => `${d.span!.start.line}:${d.span!.start.col} ${d.code}`)).toEqual(['2:1 sequence-syntax', '3:1 sequence-syntax']);
    const unknown = stepDesign(demo('nets/irrigation-sequencer.tube'), parseSequence('s', 'press NOPE; expect nowhere=1').value);
    expect('diagnostics' in unknown && unknown.diagnostics.map((d) => d.code)).toEqual(['unknown-part', 'unknown-net']);
  });

  it('exits 1 on the command line when an expectation does not hold, and prints the states', async () => {
    const r = await run(['step', 'nets/irrigation-sequencer.tube', '--sequence', 'pulse STOP; expect bed[1]/on=1', '--nets', 'bed[1]/on']);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/NOT bed\[1\]\/on=1/);
    for (const line of r.out.split('\n')) expect(line.length, line).toBeLessThanOrEqual(80);
  });
});
