import { describe, expect, it } from 'vitest';
import { DRAWING_MARK } from '../../lib/report/drawing.js';
import { runCommand } from '../cliRun.js';

describe('show --svg', () => {
  it('writes a drawing coloured by a check, and says what it drew', async () => {
    const r = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'out.svg']);
    expect(r.code, r.err).toBe(0);
    expect(r.written['out.svg']!.startsWith(DRAWING_MARK)).toBe(true);
    expect(r.written['out.svg']).toMatch(/slack above the required 5\.00 V margin/); // the cap counter's defaults { margin = 5 V }
    expect(r.err).toMatch(/^wrote out\.svg: \d+ boxes, \d+ nets; check (PASS|FAIL|UNDECIDED)\n$/);
  });

  it('draws without a check when told, nets uncoloured and no legend', async () => {
    const r = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'out.svg', '--no-margins']);
    expect(r.code, r.err).toBe(0);
    expect(r.written['out.svg']).not.toContain('slack above the required');
    expect(r.err).not.toContain('check');
  });

  it('never overwrites a file that is not its own drawing, and overwrites its own', async () => {
    const mine = 'notes I wrote';
    const refused = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'notes.svg'], { 'notes.svg': mine });
    expect(refused.code).toBe(2);
    expect(refused.err).toContain('notes.svg exists and is not a tubemargin drawing');
    expect(refused.written['notes.svg']).toBeUndefined();
    const again = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'old.svg', '--no-margins'], { 'old.svg': `${DRAWING_MARK}\n<svg/>` });
    expect(again.code, again.err).toBe(0);
    expect(again.written['old.svg']).toContain('<g class="box');
  });

  it('refuses options that contradict or that shape no drawing, with exit code 2', async () => {
    const both = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'a.svg', '--fold', '--unfold']);
    expect(both.code).toBe(2);
    expect(both.err).toContain('--fold and --unfold exclude each other');
    const alone = await runCommand(['show', 'nets/cap-counter.tube', '--fold']);
    expect(alone.code).toBe(2);
    expect(alone.err).toContain('add --svg FILE');
  });

  it('prints the drawing with --svg -, and refuses --json beside --svg', async () => {
    const r = await runCommand(['show', 'nets/cap-counter.tube', '--svg', '-', '--no-margins']);
    expect(r.code, r.err).toBe(0);
    expect(r.out.startsWith(DRAWING_MARK)).toBe(true);
    expect(r.written).toEqual({});
    const both = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'a.svg', '--json']);
    expect(both.code).toBe(2);
    expect(both.err).toContain('--json and --svg exclude each other');
  });

  it('counts what it drew in words that agree with the numbers', async () => {
    const r = await runCommand(['show', 'nets/cap-counter.tube', '--svg', 'f.svg', '--fold', '--no-margins']);
    expect(r.err).toMatch(/^wrote f\.svg: \d+ boxes, 1 net \(folded\)\n$/);
  });

  it('folds on request: the crate tally has one box per block array', async () => {
    const r = await runCommand(['show', 'nets/crate-tally.tube', '--svg', 'f.svg', '--fold', '--no-margins']);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toContain('(folded)');
    // The crate tally's instance arrays step_a, step_b and buf, the positions 1–9 and position 0 (see the design file).
    const boxes = [...r.written['f.svg']!.matchAll(/<g class="box group" data-box="([^"]*)"/g)].map((m) => m[1]);
    expect(boxes.sort()).toEqual(['buf[]', 'pos0', 'pos[]', 'step_a[]', 'step_b[]']);
  });
});
