import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { designToJson, Sampler, summarizeSamples, type Design, type MonteCarloResult, type SampleOutcome, type SamplingSetup } from '../lib/index.js';
import type { CliIo } from './io.js';
import { progressDisplay } from './progress.js';

/** The compiled worker script beside this module. */
const WORKER = new URL('./sampleWorker.js', import.meta.url);

/** Largest sample count a run takes. */
export const MAX_SAMPLES = 1_000_000;

/**
 * Runs `samples` Monte Carlo samples of a design on `workers` threads (one: in this
 * thread) and sums them up. The samples are split into contiguous ranges, one per worker,
 * and put back in index order, so the result for a seed is the same whatever the number
 * of workers. A run longer than two seconds shows a progress bar on stderr when it is a
 * terminal (`progressDisplay`).
 */
export async function runSamples(design: Design, setup: SamplingSetup, samples: number, workers: number, io: CliIo): Promise<MonteCarloResult> {
  const display = await progressDisplay(io, 'Monte Carlo');
  let done = 0;
  const tick = (n: number) => display.progress?.('samples', (done += n), samples);
  tick(0);
  // Worker threads run the compiled worker; where it is not there (the sources run directly, as
  // in the tests) the samples run in this thread, with the same result.
  const threads = existsSync(fileURLToPath(WORKER)) ? Math.max(1, Math.min(workers, samples)) : 1;
  const parameters = Sampler.parametersOf(design, setup);
  let outcomes: SampleOutcome[];
  try {
    if (threads === 1) {
      const sampler = new Sampler(design, setup);
      outcomes = [];
      for (let k = 0; k < samples; k++) {
        outcomes.push(sampler.run(k));
        if (k % 8 === 7) tick(8);
      }
    } else outcomes = await inThreads(design, setup, samples, threads, parameters.length, tick);
  } finally {
    display.stop();
  }
  return summarizeSamples(setup, parameters, outcomes);
}

/** How many workers by default: every core the machine offers. */
export function defaultWorkers(): number {
  return availableParallelism();
}

async function inThreads(design: Design, setup: SamplingSetup, samples: number, threads: number, params: number, progress: (n: number) => void): Promise<SampleOutcome[]> {
  const designJson = JSON.stringify(designToJson(design));
  const judged = setup.thresholds.length;
  const ranges = Array.from({ length: threads }, (_, w) => [Math.floor((samples * w) / threads), Math.floor((samples * (w + 1)) / threads)] as const);
  const parts = await Promise.all(
    ranges.map(
      ([from, to]) =>
        new Promise<SampleOutcome[]>((resolve, reject) => {
          const worker = new Worker(WORKER, { workerData: { designJson, setup, from, to } });
          worker.on('message', (m: { progress: number; pass?: Uint8Array; margins?: Float64Array; deviations?: Float64Array }) => {
            progress(m.progress);
            if (!m.pass) return;
            const out: SampleOutcome[] = [];
            for (let k = 0; k < to - from; k++) {
              out.push({ pass: (m.pass[k]! & 1) === 1, lost: (m.pass[k]! & 2) === 2, margins: m.margins!.subarray(k * judged, (k + 1) * judged), deviations: m.deviations!.subarray(k * params, (k + 1) * params) });
            }
            resolve(out);
            void worker.terminate();
          });
          worker.on('error', reject);
        }),
    ),
  );
  return parts.flat();
}
