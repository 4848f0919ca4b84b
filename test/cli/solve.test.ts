import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readDesignFile, type CliIo } from '../../cli/io.js';
import { runCli } from '../../cli/main.js';
import { ROOT } from '../helpers.js';

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIo = { stdout: (t) => void (out += t), stderr: (t) => void (err += t), readFile: (p) => readDesignFile(join(ROOT, p)), stdoutIsTTY: false, stderrIsTTY: false, env: {} };
  const code = await runCli(args, io);
  return { code, out, err };
}

describe('tubemargin solve', () => {
  it('prints every net, section and resistor of the operating point within 80 columns', async () => {
    const r = await run(['solve', 'nets/nor-adder.tube']);
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    for (const heading of ['Solved by', 'Nets (', 'Sections (', 'Resistors (']) expect(r.out).toContain(heading);
    expect(r.out).toMatch(/\n {2}sum +2\d\.\d\d {2}high\n/);
    for (const line of r.out.split('\n')) expect(line.length).toBeLessThanOrEqual(80);
  });

  it('writes tubemargin.solve/1 JSON with every node and a KCL residual under 1 nA', async () => {
    const r = await run(['solve', 'nets/nor-adder.tube', '--json']);
    const json = JSON.parse(r.out);
    expect(json.schema).toBe('tubemargin.solve/1');
    expect(json.converged).toBe(true);
    expect(json.residualAmps).toBeLessThan(1e-9);
    // The adder's inputs are a = 0, b = 0, carry-in = 1: sum is 1, carry-out 0.
    expect(json.nodes.sum).toBeGreaterThan(12);
    expect(json.nodes.cout).toBeLessThan(12);
    expect(Object.keys(json.tubes)).toHaveLength(18);
    expect(json.resistors['x1.load'].watts).toBeGreaterThan(0);
  });

  it('prints both states of a latch on request', async () => {
    const on = JSON.parse((await run(['solve', 'nets/irrigation-sequencer.tube', '--hint', 'bed[1]/on=1', '--json'])).out);
    const off = JSON.parse((await run(['solve', 'nets/irrigation-sequencer.tube', '--hint', 'bed[1]/on=0', '--json'])).out);
    expect(on.nodes['bed[1]/on']).toBeGreaterThan(15);
    expect(off.nodes['bed[1]/on']).toBeLessThan(6);
    expect(on.hints[0]).toMatchObject({ net: 'bed[1]/on', state: 1, held: true, assumed: false });
  });

  it('presses a button with --close', async () => {
    const r = JSON.parse((await run(['solve', 'nets/irrigation-sequencer.tube', '--close', 'bed[3]/START', '--hint', 'bed[3]/on=0', '--json'])).out);
    expect(r.nodes['bed[3]/on']).toBeGreaterThan(15);
  });

  it('exits 1 when the hinted state does not exist: a latch whose pull-downs return to 0 V holds nothing (common practice, no source)', async () => {
    // Both grids return to 0 V, so neither can be held below cutoff: both sections conduct,
    // both grids clamp in grid current, and the pair settles with both plates low, a stable
    // point (positive resistance into either net), not the metastable one.
    const r = await run(['solve', 'docs/examples/grounded-latch.tube', '--hint', 'q=1']);
    expect(r.code).toBe(1);
    expect(r.out).toContain('q=1: NOT HELD');
    expect(r.out).toMatch(/latch nq ↔ q holds no state: both nets settle low/);
    expect(r.out).not.toContain('undecided');
    const plain = await run(['solve', 'docs/examples/grounded-latch.tube', '--json']);
    expect(plain.code).toBe(1);
    const j = JSON.parse(plain.out);
    expect(j.warnings.map((w: { code: string }) => w.code)).toContain('latch-no-state');
    // The tool's own start is not "held" in a latch that has no states.
    expect(j.hints).toEqual([expect.objectContaining({ net: 'nq', assumed: true, held: false })]);
    const text = await run(['solve', 'docs/examples/grounded-latch.tube']);
    expect(text.out).toContain('nq=0 (chosen by the tool): the latch has no states here');
    expect(text.out).not.toMatch(/held at/);
  });

  it('says a latch held both-low by its set and clear at once is a stable forced state, and exits 0', async () => {
    // Both buttons pressed: each side's grid is pulled up by a closed button, so both
    // sections conduct; a real state while the buttons are held (common practice, no source).
    const r = await run(['solve', 'nets/irrigation-sequencer.tube', '--close', 'STOP', '--close', 'bed[1]/START']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/latch bed\[1\]\/off ↔ bed\[1\]\/on is held with both nets low/);
    expect(r.out).not.toContain('undecided');
    const j = JSON.parse((await run(['solve', 'nets/irrigation-sequencer.tube', '--close', 'STOP', '--close', 'bed[1]/START', '--json'])).out);
    expect(j.forcedLatches).toEqual([{ nets: ['bed[1]/off', 'bed[1]/on'], volts: [expect.any(Number), expect.any(Number)], level: 0 }]);
    for (const v of j.forcedLatches[0].volts) expect(v).toBeLessThan(5);
  });

  it('does not fail the run when a state the tool chose itself does not exist: it says where the latch settled', async () => {
    // STOP clears every bed, so the tool's start bed[2]/off=0 cannot hold while it is pressed.
    const r = await run(['solve', 'nets/irrigation-sequencer.tube', '--close', 'STOP']);
    expect(r.code).toBe(0);
    expect(r.out).toContain('bed[1]/off=0 (chosen by the tool): that state does not exist here; settled in');
    expect(r.out).not.toContain('NOT HELD');
    expect(r.out).not.toContain('hint was released');
    // The user's own hint that cannot hold still fails.
    const own = await run(['solve', 'nets/irrigation-sequencer.tube', '--close', 'STOP', '--hint', 'bed[1]/on=1']);
    expect(own.code).toBe(1);
    expect(own.out).toContain('bed[1]/on=1: NOT HELD');
  });

  it('refuses a hint on a net in no latch or loop (exit 2): pinned for the start, an input would set or clear the latches it feeds', async () => {
    for (const net of ['stop', 'valve[1]', 'bed[1]/mem/q.g1']) {
      const r = await run(['solve', 'nets/irrigation-sequencer.tube', '--hint', `${net}=1`]);
      expect(r.code, net).toBe(2);
      expect(r.err, net).toContain(`--hint names '${net}', which is in no latch or loop`);
      expect(r.out, net).toBe('');
    }
    // Step and pulse take hints too, and refuse the same.
    const step = await run(['step', 'nets/irrigation-sequencer.tube', '--hint', 'stop=1', '--sequence', 'press STOP']);
    expect(step.code).toBe(2);
    expect(step.err).toContain('in no latch or loop');
  });

  it('exits 2 on a malformed hint, an unknown net or an unknown switch, with a suggestion', async () => {
    expect((await run(['solve', 'nets/nor-adder.tube', '--hint', 'x1=high'])).code).toBe(2);
    const net = await run(['solve', 'nets/nor-adder.tube', '--hint', 'x9=1']);
    expect(net.code).toBe(2);
    expect(net.err).toContain("unknown net 'x9'");
    const sw = await run(['solve', 'nets/nor-adder.tube', '--close', 'SX']);
    expect(sw.code).toBe(2);
    expect(sw.err).toContain("did you mean 'SA'?");
  });

  it('exits 2 on a short circuit, pointing at the rail or drive that causes it', async () => {
    const r = await run(['solve', 'docs/examples/shorted-rails.tube']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/docs\/examples\/shorted-rails\.tube:\d+:1: error: short circuit/);
  });

  it('carries the safety cautions for a design above 60 V', async () => {
    const r = await run(['solve', 'nets/crate-tally.tube', '--hint', 'on[0]=1']);
    expect(r.code).toBe(0);
    expect(r.out).toContain('CAUTION');
    expect(JSON.parse((await run(['solve', 'nets/crate-tally.tube', '--json'])).out).cautions.length).toBeGreaterThan(0);
  });
});
