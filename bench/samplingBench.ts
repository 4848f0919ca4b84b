import { readFileSync } from 'node:fs';
import { dirname, join, normalize } from 'node:path';
import { checkMargins, loadDesign, samplingThresholds, type Design, type SamplingSetup } from '../lib/index.js';
import type { CliIo } from '../cli/io.js';
import { runSamples } from '../cli/sampling.js';
import { generateRegister } from './generate.js';

const quiet: CliIo = { stdout: () => {}, stderr: () => {}, readFile: () => '', stdoutIsTTY: false, stderrIsTTY: false, env: {} };

function setupFor(design: Design): SamplingSetup {
  const check = checkMargins(design);
  if (!('verdict' in check)) throw new Error('the design does not compile');
  return { seed: 1, distribution: 'uniform', scenario: 'new', requiredMargin: check.requiredMargin, thresholds: samplingThresholds(check) };
}

async function timed(fn: () => Promise<unknown>): Promise<number> {
  const t0 = performance.now();
  await fn();
  return performance.now() - t0;
}

export interface SamplingBench {
  stages: number;
  /** Full DC solves per second once running (setup cancelled out by two run lengths), by worker count. */
  rate: Record<number, number>;
  /** Whole runs, setup included (ms), by worker count. */
  wholeMs: Record<number, number>;
  solvesPerSample: number;
}

/**
 * Monte Carlo throughput on a generated register: runs of `short` and `long` samples with
 * 1 and 2 workers; the rate is the difference in solves over the difference in time, so
 * each worker's one-off setup (compiling, the nominal states) cancels out.
 */
export async function benchSampling(stages: number, short: number, long: number): Promise<SamplingBench> {
  const design = loadDesign('generated.tube', generateRegister(stages)).design!;
  const setup = setupFor(design);
  const solvesPerSample = 2; // the register's latches in each of their two states
  const rate: Record<number, number> = {};
  const wholeMs: Record<number, number> = {};
  for (const workers of [1, 2]) {
    const a = await timed(() => runSamples(design, setup, short, workers, quiet));
    const b = await timed(() => runSamples(design, setup, long, workers, quiet));
    rate[workers] = ((long - short) * solvesPerSample) / ((b - a) / 1000);
    wholeMs[workers] = b;
  }
  return { stages, rate, wholeMs, solvesPerSample };
}

/** A yield run of a demo design as the command does it: check, then the samples on `workers` threads (ms). */
export async function benchDemoYield(file: string, samples: number, workers: number): Promise<{ ms: number; yield: number }> {
  const path = new URL(`../../${file}`, import.meta.url).pathname;
  const loader = (request: string, from: string) => {
    const f = normalize(join(dirname(from), request));
    return { file: f, text: readFileSync(f, 'utf8') };
  };
  let result = NaN;
  const ms = await timed(async () => {
    const design = loadDesign(path, readFileSync(path, 'utf8'), { loader }).design!;
    result = (await runSamples(design, setupFor(design), samples, workers, quiet)).yield;
  });
  return { ms, yield: result };
}
