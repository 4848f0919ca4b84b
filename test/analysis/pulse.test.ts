import { describe, expect, it } from 'vitest';
import { buildStageGraph, clockLimit, loadDesign, parseSequence, parseWaveform, pulseDesign, stepDesign, type Waveform } from '../../lib/index.js';
import { design, memoryLoader, netsFiles } from '../helpers.js';
import { runCommand as run } from '../cliRun.js';
import { toggleBinaryText as binary } from './oracle.js';

const wave = (text: string): Waveform => {
  const w = parseWaveform(text);
  if ('error' in w) throw new Error(w.error);
  return w.value;
};

const crateTally = () => {
  const files = netsFiles();
  return loadDesign('nets/crate-tally.tube', files['nets/crate-tally.tube']!, { loader: memoryLoader(files) }).design!;
};

/** The crate tally after its RESET button, by stepping: the state a run in time starts from. */
const afterReset = (d: ReturnType<typeof crateTally>) => {
  const stepped = stepDesign(d, parseSequence('s', 'pulse RESET').value);
  if (!('final' in stepped) || !stepped.final) throw new Error('reset did not solve');
  return stepped.final;
};

const twoPhase = (period: string) =>
  new Map([
    ['LINE_A', wave(`clock(150V, 0V, period=${period}, width=25%)`)],
    ['LINE_B', wave(`clock(150V, 0V, period=${period}, width=25%, delay=50%)`)],
  ]);

describe('waveforms', () => {
  it('a clock idles, ramps over its edge, holds for its width and repeats every period', () => {
    const w = wave('clock(150V, 0V, period=100us, width=25%, delay=10us, edge=1us)');
    expect(w.at(5e-6)).toBe(150);
    expect(w.at(10.5e-6)).toBeCloseTo(75, 9); // halfway down the edge
    expect(w.at(20e-6)).toBe(0);
    expect(w.at(35.5e-6)).toBeCloseTo(75, 9); // halfway back up
    expect(w.at(50e-6)).toBe(150);
    expect(w.at(120e-6)).toBe(0); // the next period
    const near = (got: number[], want: number[]) => {
      expect(got).toHaveLength(want.length);
      got.forEach((g, i) => expect(g).toBeCloseTo(want[i]!, 12));
    };
    near(w.pulseStarts(250e-6), [10e-6, 110e-6, 210e-6]);
    near(w.corners(100e-6), [10e-6, 11e-6, 35e-6, 36e-6]);
    // At a tenth of the period the width (25 %) follows it; the delay and edge, in seconds, stay.
    const fast = w.withPeriod!(20e-6);
    near(fast.corners(20e-6), [10e-6, 11e-6, 15e-6, 16e-6]);
    // Where seconds no longer fit, the whole shape follows the period.
    const faster = w.withPeriod!(2e-6);
    near(faster.corners(1e-6), [0.2e-6, 0.22e-6, 0.7e-6, 0.72e-6]);
  });

  it('a single pulse rises at its time, holds its width and has no period for a speed search to shorten', () => {
    const w = wave('pulse(0V, 5V, at=10us, width=5us, edge=1us)');
    expect(w.at(9e-6)).toBe(0);
    expect(w.at(10.5e-6)).toBeCloseTo(2.5, 9);
    expect(w.at(12e-6)).toBe(5);
    expect(w.at(20e-6)).toBe(0);
    expect(w.pulseStarts(1)).toHaveLength(1);
    expect(w.pulseStarts(1)[0]).toBeCloseTo(10e-6, 15);
    expect(w.period).toBeUndefined();
    expect(w.withPeriod).toBeUndefined();
  });

  it('points are joined by straight lines and held after the last', () => {
    const w = wave('points(0s 0V, 1ms 10V, 3ms -10V)');
    expect(w.at(0.5e-3)).toBeCloseTo(5, 12);
    expect(w.at(2e-3)).toBeCloseTo(0, 12);
    expect(w.at(9)).toBe(-10);
    expect(w.corners(1)).toEqual([1e-3, 3e-3]);
  });

  it('bad waveforms are refused with the reason', () => {
    const error = (t: string) => {
      const w = parseWaveform(t);
      return 'error' in w ? w.error : '';
    };
    expect(error('clock(150V, 0V)')).toMatch(/period/);
    expect(error('clock(150V, 0V, period=10us, width=10us)')).toMatch(/fit in the period/);
    expect(error('clock(150 ohm, 0V, period=1ms)')).toMatch(/not in volts/);
    expect(error('clock(150V, 0V, period=1ms, speed=3)')).toMatch(/not 'speed'/);
    expect(error('pulse(0V, 5V, at=1us)')).toMatch(/width/);
    expect(error('points(1ms 0V, 0s 1V)')).toMatch(/forward in time/);
    expect(error('square(1)')).toMatch(/no waveform/);
  });
});

describe('counting in time', () => {
  it('the crate tally counts one position per two-phase clock when simulated in time (ring-counter logic, common practice)', () => {
    const d = crateTally();
    const r = pulseDesign(d, { inputs: twoPhase('100us'), stop: 300e-6, start: afterReset(d), nets: Array.from({ length: 10 }, (_, i) => `on[${i}]`) });
    if (!('run' in r)) throw new Error(r.diagnostics[0]?.message);
    expect(r.run.ok).toBe(true);
    // After each phase B the lit position has moved one on; phase A alone moves nothing.
    const lit = r.pulses.map((p) => p.states.findIndex(Boolean));
    expect(r.pulses.map((p) => p.input)).toEqual(['LINE_A', 'LINE_B', 'LINE_A', 'LINE_B', 'LINE_A', 'LINE_B']);
    expect(lit).toEqual([0, 1, 1, 2, 2, 3]);
    for (const p of r.pulses) expect(p.states.filter(Boolean)).toHaveLength(1);
    // A copy stage passes a change on within a microsecond or few: delays are positive and far below the phase.
    const gate = r.stages.find((s) => s.stage === 'ps[1]')!;
    expect(gate.delay!.seconds).toBeGreaterThan(0);
    expect(gate.delay!.seconds).toBeLessThan(25e-6);
    expect(gate.rise! + gate.fall!).toBeGreaterThan(0);
  });

  it('a toggle binary flips on every trigger, and with too small a trigger capacitor on none (capacitive divider: 1 pF into 10 pF of stray passes 14 V of a 150 V step)', () => {
    const pulses = (ct: string) => {
      const r = pulseDesign(design(binary(ct)), { inputs: new Map([['CLK', wave('clock(150V, 0V, period=100us, width=10%, edge=1%)')]]), stop: 400e-6, nets: ['a', 'b'] });
      if (!('run' in r)) throw new Error(r.diagnostics[0]?.message);
      return r;
    };
    const good = pulses('220 pF');
    // A binary divides by two: its state alternates pulse by pulse (common practice, no source).
    expect(good.pulses.map((p) => p.flipped)).toEqual([['a/b'], ['a/b'], ['a/b'], ['a/b']]);
    expect(good.pulses.map((p) => p.states[0])).toEqual([true, false, true, false]);
    // The trigger sets it off: the delay is counted from the trigger or the other plate, and is short.
    expect(good.stages.find((s) => s.stage === 'a')!.delay!.seconds).toBeLessThan(10e-6);
    const weak = pulses('1 pF');
    expect(weak.pulses.every((p) => p.flipped.length === 0)).toBe(true);
  });
});

describe('the cap counter, a ripple binary', () => {
  const capCounter = (edit: (text: string) => string = (t) => t) => {
    const files = netsFiles();
    const text = edit(files['nets/cap-counter.tube']!);
    return loadDesign('nets/cap-counter.tube', text, { loader: memoryLoader({ ...files, 'nets/cap-counter.tube': text }) }).design!;
  };
  const count = (d: ReturnType<typeof capCounter>, pulses: number) => {
    const r = pulseDesign(d, {
      inputs: new Map([['HOPPER', wave('clock(150V, 0V, period=100us, width=10%)')]]),
      stop: pulses * 100e-6 - 50e-6,
      hints: [0, 1, 2, 3].map((i) => ({ net: `q[${i}]`, high: false })),
      nets: ['q[3]', 'q[2]', 'q[1]', 'q[0]'],
    });
    if (!('run' in r)) throw new Error(r.diagnostics[0]?.message);
    return r;
  };

  it('counts caps in binary, 1 to 15 and round to 0, one a pulse (a ripple binary counter, common practice, no source)', () => {
    const r = count(capCounter(), 16);
    expect(r.pulses.map((p) => parseInt(p.states.map((s) => (s ? '1' : '0')).join(''), 2))).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 0]);
    // The lowest stage flips on every pulse, each higher one on every second flip of the one below.
    expect(r.pulses.filter((p) => p.flipped.includes('nq[0]/q[0]'))).toHaveLength(16);
    expect(r.pulses.filter((p) => p.flipped.includes('nq[3]/q[3]'))).toHaveLength(2);
    // A stage set off through the trigger capacitor: its delay is counted from the stage below.
    expect(r.stages.find((s) => s.stage === 'nq[2]')!.delay!.from).toBe('q[1]');
  });

  it('with a trigger network too slow to recover (220 pF into 100 kΩ: 22 µs) it miscounts past 7, and the stage that fails is named', async () => {
    // The steering node holds both plates of a stage down until it recovers: a flip that
    // needs a plate to rise waits for it, and the stages below glitch (RC time constant).
    const slow = (t: string) => t.replace(/let ct = 100 pF/, 'let ct = 220 pF').replace(/resistor RS \(steer, hv\) 47 k/, 'resistor RS (steer, hv) 100 k');
    const r = count(capCounter(slow), 8);
    expect(r.pulses.map((p) => p.states[0])).toEqual([false, false, false, false, false, false, false, false]);
    const files = netsFiles();
    const cli = await run(['pulse', 'nets/cap-counter.tube', '--for', '750us', '--input', 'HOPPER=clock(150V, 0V, period=100us, width=10%)', '--hint', 'q[0]=0', '--hint', 'q[1]=0', '--hint', 'q[2]=0', '--hint', 'q[3]=0', '--expect', 'q[3]=1'], { 'nets/cap-counter.tube': slow(files['nets/cap-counter.tube']!) });
    expect(cli.code).toBe(1);
    expect(cli.out).toMatch(/Expected q\[3\]=1 at the end, NOT met: latch nq\[3\]\/q\[3\] flipped on no pulse/);
  });
});

describe('the fastest clock', () => {
  it('the crate tally counts at the period found in every corner, fails just faster, and the stage named feeds the net that went wrong', { timeout: 120_000 }, () => {
    const d = crateTally();
    const told: [number, number][] = [];
    const r = clockLimit(d, { inputs: twoPhase('100us'), stop: 200e-6, start: afterReset(d), resolution: 0.05, onProgress: (_, done, total) => void told.push([done, total]) });
    if (!('runs' in r)) throw new Error(r.diagnostics[0]?.message);
    // Progress: one call a trial period, the estimate never below what is done, and exact at the end.
    expect(told.map(([done]) => done)).toEqual(told.map((_, i) => i + 1));
    expect(told.every(([done, total]) => total >= done)).toBe(true);
    expect(told.at(-1)![1]).toBe(told.length);
    expect(r.passing).toBeDefined();
    expect(r.failing).toBeDefined();
    expect(r.passing! / r.failing!.period).toBeLessThan(1.05);
    expect(r.passing! / r.failing!.period).toBeGreaterThan(1);
    expect(r.failing!.wrong.length).toBeGreaterThan(0);
    expect(r.limiting).toBeDefined();
    // The limiting stage is a net that went wrong or a stage feeding one (the stage graph's edges).
    const wrong = r.failing!.wrong.map((w) => w.net);
    const graph = buildStageGraph(d);
    expect(wrong.some((n) => n === r.limiting!.stage || (graph.graph.predecessors(n) ?? []).includes(r.limiting!.stage))).toBe(true);
    // A phase pulse (a quarter period) must outlast the copy that it clocks: the limiting
    // stage's delay fits in the pulse at the passing period (common practice, no source).
    expect(r.limiting!.delay!.seconds).toBeLessThan(0.25 * r.passing!);
    // The order of magnitude from the RC time constants: 47 kΩ loads into some 30 pF give
    // 1.4 µs a stage, and a clock passes a copy gate and a latch twice (common practice, no source).
    expect(r.passing!).toBeGreaterThan(5e-6);
    expect(r.passing!).toBeLessThan(50e-6);
  });
});

describe('tubemargin pulse', () => {
  const clock = 'CLK=clock(150V, 0V, period=100us, width=10%, edge=1%)';
  it('a too small trigger capacitor fails the expectation with the latch named, exit 1', async () => {
    const r = await run(['pulse', 'b.tube', '--for', '50us', '--input', clock, '--expect', 'a=1'], { 'b.tube': binary('1 pF') });
    expect(r.code).toBe(1);
    expect(r.out).toMatch(/Expected a=1 at the end, NOT met: latch a\/b flipped on no pulse/);
    expect(r.out).toMatch(/CAUTION/);
    // The terminal report keeps to 80 columns.
    for (const line of r.out.split('\n')) expect(line.length).toBeLessThanOrEqual(80);
    const ok = await run(['pulse', 'b.tube', '--for', '50us', '--input', clock, '--expect', 'a=1'], { 'b.tube': binary('220 pF') });
    expect(ok.code).toBe(0);
    // The verdict leads the terminal report, as check's does, and agrees with the exit code.
    expect(r.out.split('\n')[1]).toMatch(/^FAIL: 1 of 1 state asked for at the end is not met \(a should be 1\)/);
    expect(ok.out.split('\n')[1]).toMatch(/^PASS: the run finished; every state asked for at the end holds/);
    const asked = await run(['pulse', 'b.tube', '--for', '50us', '--input', clock], { 'b.tube': binary('220 pF') });
    expect(asked.code).toBe(0);
    expect(asked.out.split('\n')[1]).toMatch(/^DONE: the run finished\. Nothing was asked of it/);
  });

  it('writes waveforms as CSV and JSON, and never overwrites a file it did not write', async () => {
    const files = { 'b.tube': binary('220 pF'), 'mine.csv': 'my own notes\n' };
    const r = await run(['pulse', 'b.tube', '--for', '50us', '--input', clock, '--csv', 'w.csv', '--nets', 'a,b'], files);
    expect(r.code).toBe(0);
    const lines = r.written['w.csv']!.trim().split('\n');
    expect(lines[0]).toBe('time_s,t,a,b');
    expect(lines.length).toBeGreaterThan(20);
    // Any net can be probed, a grid or the steering node, for the waveforms.
    const probed = await run(['pulse', 'b.tube', '--for', '50us', '--input', clock, '--csv', 'p.csv', '--nets', 'a', '--probe', 'ga,s'], files);
    expect(probed.written['p.csv']!.split('\n')[0]).toBe('time_s,t,a,ga,s');
    expect((await run(['pulse', 'b.tube', '--for', '50us', '--probe', 'nope'], files)).code).toBe(2);
    const refused = await run(['pulse', 'b.tube', '--for', '50us', '--input', clock, '--csv', 'mine.csv'], files);
    expect(refused.code).toBe(2);
    expect(refused.err).toMatch(/not a tubemargin waveform CSV/);
    // Refused before the design is even read, so before any simulation (issue #17): a design with an error is not reported.
    const early = await run(['pulse', 'broken.tube', '--for', '50us', '--input', clock, '--csv', 'mine.csv'], { ...files, 'broken.tube': 'stage q { nonsense }\n' });
    expect(early.code).toBe(2);
    expect(early.err).toMatch(/not a tubemargin waveform CSV/);
    expect(early.err).not.toMatch(/broken.tube/);
    const json = await run(['pulse', 'b.tube', '--for', '150us', '--input', clock, '--json', '--nets', 'a,b'], files);
    const doc = JSON.parse(json.out);
    expect(doc.schema).toBe('tubemargin.pulse/1');
    expect(doc.cautions.join(' ')).toMatch(/exceed 60 V/);
    expect(doc.pulses).toHaveLength(2);
    expect(doc.waves.time.length).toBe(doc.waves.volts.a.length);
  });

  it('writes an HTML page with the waveforms plotted, overwriting only an earlier report', async () => {
    const files = { 'b.tube': binary('220 pF'), 'notes.html': '<p>mine</p>' };
    const r = await run(['pulse', 'b.tube', '--for', '150us', '--input', clock, '-o', 'p.html'], files);
    expect(r.code).toBe(0);
    const html = r.written['p.html']!;
    expect(html.startsWith('<!doctype html><!-- tubemargin report -->')).toBe(true);
    expect(html).toMatch(/<svg/);
    expect(html).toMatch(/State after each pulse/);
    expect(html).toMatch(/Caution: high voltage/);
    expect(html).not.toMatch(/<script/);
    const refused = await run(['pulse', 'b.tube', '--for', '150us', '--input', clock, '-o', 'notes.html'], files);
    expect(refused.code).toBe(2);
  });

  it('without a clock it reports the state the run ends in: the adder with its carry switch closed reads sum 1, carry 0 (the full adder\'s truth table)', async () => {
    const r = await run(['pulse', 'nets/nor-adder.tube', '--for', '50us', '--nets', 'a,b,cin,cout,sum']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/the state at the end \(50 µs\): 00101\n/);
  });

  it('--after takes a sequence file as step does, and points a bad action at its line and column', async () => {
    const args = ['pulse', 'nets/crate-tally.tube', '--for', '20us', '--nets', 'on[0],on[1]'];
    const fromFile = await run([...args, '--after', 'docs/examples/crate-count.seq']);
    expect(fromFile.code).toBe(0);
    // The example ends with the lit position at 1.
    expect(fromFile.out).toMatch(/the state at the end \(20 µs\): 01\n/);
    const bad = await run([...args, '--after', 'pulse RESET; wiggle RESET']);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/\(--after\):1:14: error: not an action: 'wiggle RESET'/);
  });

  it('bad options are usage errors (exit 2): no length, a bad waveform, a drive the design lacks', async () => {
    const files = { 'b.tube': binary('220 pF') };
    expect((await run(['pulse', 'b.tube', '--input', clock], files)).code).toBe(2);
    const bad = await run(['pulse', 'b.tube', '--for', '1ms', '--input', 'CLK=clock(150V, 0V, perod=1ms)'], files);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/not 'perod'/);
    const nope = await run(['pulse', 'b.tube', '--for', '1ms', '--input', 'NOPE=150V'], files);
    expect(nope.code).toBe(2);
    expect(nope.err).toMatch(/'NOPE' is no drive/);
    expect(nope.err).not.toMatch(/the design has errors/);
  });

  it('says how to move a button in time when a waveform names one: a drive on its net stands in for it', async () => {
    const r = await run(['pulse', 'nets/crate-tally.tube', '--for', '10us', '--input', 'RESET=pulse(0V, 150V, at=1us, width=2us)']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/'RESET' is a button: give its net a 'drive'/);
  });
});
