import { describe, expect, it } from 'vitest';
import { checkMargins, loadDesign, sweepRails, tuneStage } from '../../lib/index.js';
import { progressDisplay, timeLeft } from '../../cli/progress.js';
import type { CliIo } from '../../cli/io.js';
import { memoryLoader, netsFiles } from '../helpers.js';

const demo = (name: string) => {
  const files = netsFiles();
  return loadDesign(name, files[name]!, { loader: memoryLoader(files) }).design!;
};

type Call = [phase: string, done: number, total: number];
const recorder = () => {
  const calls: Call[] = [];
  return { calls, progress: (phase: string, done: number, total: number) => void calls.push([phase, done, total]) };
};

/** Within each phase the count only rises, never past the total, and starts again with a new phase. */
function expectOrderly(calls: Call[]): void {
  for (let i = 1; i < calls.length; i++) {
    const [phase, done, total] = calls[i]!;
    expect(done, `${phase} ${done}/${total}`).toBeLessThanOrEqual(total);
    if (calls[i - 1]![0] === phase) expect(done).toBeGreaterThanOrEqual(calls[i - 1]![1]);
  }
}

describe('progress of long runs (issue #16)', () => {
  it('estimates the time left from the rate so far, and gives none before anything is done', () => {
    // Linear extrapolation of the rate so far (common practice, no source): a quarter done in 5 s leaves 15 s.
    expect(timeLeft(5000, 25, 100)).toBe('about 15s left');
    expect(timeLeft(30_000, 1, 4)).toBe('about 1m30s left');
    expect(timeLeft(900, 90, 100)).toBe('under a second left');
    expect(timeLeft(100, 0, 100)).toBe('');
    expect(timeLeft(100, 100, 100)).toBe('');
  });

  it('a sweep counts its points to the grid size', () => {
    const { calls, progress } = recorder();
    const r = sweepRails(demo('nets/nor-adder.tube'), { axes: [{ rail: 'bp', from: 20, to: 28, step: 2 }], onProgress: progress });
    if (!('grid' in r)) throw new Error('no sweep');
    expectOrderly(calls);
    expect(calls[0]).toEqual(['points', 0, 5]);
    expect(calls.at(-1)).toEqual(['points', 5, 5]);
  });

  it('tune counts each round\'s candidates to the total it announced', () => {
    const { calls, progress } = recorder();
    const r = tuneStage(demo('nets/nor-adder.tube'), { stage: 'y2', series: 'E6', onProgress: progress });
    if (!('best' in r)) throw new Error('no tune');
    expectOrderly(calls);
    const ends = calls.filter(([, done, total]) => done === total && done > 0).map(([phase]) => phase);
    expect(ends).toEqual(['round 1 of 2', 'round 2 of 2']);
  });

  it('check reports the rounds of its levels, each counting the nets to their number', () => {
    const { calls, progress } = recorder();
    const d = demo('nets/crate-tally.tube');
    const r = checkMargins(d, { onProgress: progress });
    if (!('verdict' in r)) throw new Error('no check');
    expectOrderly(calls);
    const rounds = [...new Set(calls.map(([phase]) => phase).filter((p) => p.startsWith('levels, round ')))];
    expect(rounds[0]).toBe('levels, round 1');
    // Then the phases after the levels, in the order check runs them.
    const after = [...new Set(calls.map(([phase]) => phase).filter((p) => !p.startsWith('levels, round ')))];
    expect(after.slice(0, 4)).toEqual(['levels of the whole design', 'receivers', 'margins and fan-out headroom', 'latches']);
    // The same check without a listener gives the same verdict and levels: progress only watches.
    const quiet = checkMargins(d);
    if (!('verdict' in quiet)) throw new Error('no check');
    expect(quiet.nets.map((n) => [n.name, n.status, n.margin])).toEqual(r.nets.map((n) => [n.name, n.status, n.margin]));
  });

  it('listens only where stderr is a terminal: on a pipe the analyses get no listener', async () => {
    const io = { stdout: () => {}, stderr: () => {}, stderrIsTTY: false, env: {} } as unknown as CliIo;
    expect((await progressDisplay(io, 'check')).progress).toBeUndefined();
    expect((await progressDisplay({ ...io, stderrIsTTY: true }, 'check')).progress).toBeTypeOf('function');
  });
});
