import { parentPort, workerData } from 'node:worker_threads';
import { designFromJson, Sampler, type SamplingSetup } from '../lib/index.js';

/**
 * One worker thread of a Monte Carlo run: rebuilds the design from its JSON form, solves
 * samples `from`…`to − 1` and sends their outcomes back packed in typed arrays (bit 0 of
 * a flag: passed; bit 1: lost a latch state), with a
 * progress message every few samples. Samples are seeded by their index alone, so the
 * outcomes do not depend on how the run was split.
 */
const { designJson, setup, from, to } = workerData as { designJson: string; setup: SamplingSetup; from: number; to: number };
const design = designFromJson(designJson, 'design.json').value!;
const sampler = new Sampler(design, setup);
const count = to - from;
const judged = setup.thresholds.length;
const params = sampler.parameters.length;
const pass = new Uint8Array(count);
const margins = new Float64Array(count * judged);
const deviations = new Float64Array(count * params);
for (let k = 0; k < count; k++) {
  const o = sampler.run(from + k);
  pass[k] = (o.pass ? 1 : 0) | (o.lost ? 2 : 0);
  margins.set(o.margins, k * judged);
  deviations.set(o.deviations, k * params);
  if (k % 8 === 7) parentPort!.postMessage({ progress: 8 });
}
parentPort!.postMessage({ progress: count % 8, pass, margins, deviations }, [pass.buffer, margins.buffer, deviations.buffer]);
