import { describe, expect, it } from 'vitest';
import { BATCH, commandsFor, failureLines, inProcess, newTally, record, runCommandLine } from '../../tools/fuzz.js';
import { sampleDesigns } from '../../tools/fuzzDesigns.js';
import { runCommand } from '../cliRun.js';

/** Issue 14's fuzzing, part 3 of 3: the commands themselves, in-process (see solve.test.ts for the invariants; here also exit codes 0, 1, 2 only). */
describe('odd but valid designs through every command keep the invariants of issue 14', () => {
  it('solve, check, check --samples 50, sweep, report, step and pulse, text and JSON, on 36 small designs: exit 0, 1 or 2, no internal error, no NaN, no unexplained null, solve and step within the span', async () => {
    const t = newTally();
    for (const fd of sampleDesigns(142_029, 36, BATCH.small)) {
      for (const args of commandsFor(fd)) record(t, await runCommandLine(fd.text, args, runCommand), fd.text, { args });
    }
    expect(t.runs).toBeGreaterThanOrEqual(300);
    expect(t.byOutcome.rejected).toBeLessThan(t.runs * 0.3);
    expect(failureLines(t)).toEqual([]);
  }, 600_000); // over 300 command runs: about 100 s alone, over 120 s on a 2-core machine busy with other work

  it("the harness's in-process runner sees what the tests' runCommand sees", async () => {
    const [fd] = sampleDesigns(142_030, 1, BATCH.small);
    for (const args of commandsFor(fd!).slice(0, 4)) {
      const [a, b] = [await inProcess(args, { 'f.tube': fd!.text }), await runCommand(args, { 'f.tube': fd!.text })];
      expect([a.code, a.out, a.err]).toEqual([b.code, b.out, b.err]);
    }
  });
});
