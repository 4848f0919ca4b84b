import { readFileSync } from 'node:fs';
import { dirname, join, normalize } from 'node:path';
import { clockLimit, loadDesign, parseSequence, parseWaveform, pulseDesign, stepDesign, type Design, type Waveform } from '../lib/index.js';

/** The crate tally demo, read from nets/. */
function crateTally(): Design {
  const path = new URL('../../nets/crate-tally.tube', import.meta.url).pathname;
  const loader = (request: string, from: string) => {
    const f = normalize(join(dirname(from), request));
    return { file: f, text: readFileSync(f, 'utf8') };
  };
  return loadDesign(path, readFileSync(path, 'utf8'), { loader }).design!;
}

const wave = (text: string): Waveform => {
  const w = parseWaveform(text);
  if ('error' in w) throw new Error(w.error);
  return w.value;
};

export interface PulseBench {
  unknowns: number;
  capacitors: number;
  runMs: number;
  steps: number;
  rejected: number;
  iterations: number;
  limitMs: number;
  runs: number;
  passing: number | undefined;
  corner: string | undefined;
  limiting: string | undefined;
}

/**
 * The demo counter in time: three two-phase clocks at 100 µs from the state its RESET
 * leaves (the README's tour), then the fastest-clock search over the same three clocks.
 */
export function benchPulse(): PulseBench {
  const design = crateTally();
  const stepped = stepDesign(design, parseSequence('bench', 'pulse RESET').value);
  if (!('final' in stepped) || !stepped.final) throw new Error('RESET did not solve');
  const inputs = new Map([
    ['LINE_A', wave('clock(150V, 0V, period=100us, width=25%)')],
    ['LINE_B', wave('clock(150V, 0V, period=100us, width=25%, delay=50%)')],
  ]);
  const settings = { inputs, stop: 300e-6, start: stepped.final };
  let t0 = performance.now();
  const r = pulseDesign(design, settings);
  const runMs = performance.now() - t0;
  if (!('run' in r)) throw new Error('the pulse run failed');
  t0 = performance.now();
  const limit = clockLimit(design, settings);
  const limitMs = performance.now() - t0;
  if (!('runs' in limit)) throw new Error('the clock search failed');
  return {
    unknowns: r.run.circuit.n,
    capacitors: r.run.circuit.cA.length,
    runMs,
    steps: r.run.accepted,
    rejected: r.run.rejected,
    iterations: r.run.newtonIterations,
    limitMs,
    runs: limit.runs,
    passing: limit.passing,
    corner: limit.failing?.corner,
    limiting: limit.limiting?.stage,
  };
}
