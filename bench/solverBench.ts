import { buildStageGraph, loadDesign, solveOperatingPoint, type Design, type OperatingPoint } from '../lib/index.js';
import { denseReference } from './denseReference.js';
import { generateRegister } from './generate.js';

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)] as number;
}

function timed<T>(fn: () => T): [T, number] {
  const t0 = performance.now();
  const out = fn();
  return [out, performance.now() - t0];
}

function solved(d: Design, options: Parameters<typeof solveOperatingPoint>[1] = {}): OperatingPoint {
  const op = solveOperatingPoint(d, options);
  if (!('nodes' in op) || !op.converged) throw new Error('the generated design did not solve');
  return op;
}

export interface SolverBenchRow {
  stages: number;
  unknowns: number;
  sections: number;
  coldMs: number;
  warmMs: number;
  iterations: number;
  perIterationMs: number;
}

/** Full DC solves of generated registers: cold (compile and symbolic analysis included) and warm (reusing them). */
export function benchSizes(sizes: number[]): SolverBenchRow[] {
  return sizes.map((stages) => {
    const design = loadDesign('generated.tube', generateRegister(stages)).design!;
    const colds: number[] = [];
    let op: OperatingPoint | undefined;
    for (let i = 0; i < 3; i++) {
      const [o, ms] = timed(() => solved(design));
      colds.push(ms);
      op = o;
    }
    const graph = buildStageGraph(design);
    const warms: number[] = [];
    for (let i = 0; i < 5; i++) warms.push(timed(() => solved(design, { system: op!.system, graph }))[1]);
    const warmMs = median(warms);
    return {
      stages,
      unknowns: op!.system.circuit.n,
      sections: op!.system.circuit.tA.length,
      coldMs: median(colds),
      warmMs,
      iterations: op!.iterations,
      perIterationMs: warmMs / op!.iterations,
    };
  });
}

/** Newton iteration (assemble, factor, solve) against evaluating every section once, at the solution. */
export function iterationAgainstModels(stages: number): { iterationUs: number; modelsUs: number; ratio: number } {
  const design = loadDesign('generated.tube', generateRegister(stages)).design!;
  const op = solved(design);
  const s = { gmin: 1e-12, sourceScale: 1, maxStep: Infinity, maxIterations: 1 };
  const reps = 200;
  let sink = 0;
  const models: number[] = [];
  const iterations: number[] = [];
  for (let round = 0; round < 5; round++) {
    let t0 = performance.now();
    for (let i = 0; i < reps; i++) sink += op.system.evaluateSections(op.x, s);
    models.push((performance.now() - t0) / reps);
    t0 = performance.now();
    for (let i = 0; i < reps; i++) op.system.linearise(op.x, s);
    iterations.push((performance.now() - t0) / reps);
  }
  if (!Number.isFinite(sink)) throw new Error('unreachable');
  const modelsUs = median(models) * 1000;
  const iterationUs = median(iterations) * 1000;
  return { iterationUs, modelsUs, ratio: iterationUs / modelsUs };
}

/** The same full solve with the sparse LU and with mathjs' dense solver. */
export function againstDense(stages: number): { sparseMs: number; denseMs: number; ratio: number; unknowns: number } {
  const design = loadDesign('generated.tube', generateRegister(stages)).design!;
  solved(design);
  const sparseMs = median([0, 1, 2].map(() => timed(() => solved(design))[1]));
  const [dense, denseMs] = timed(() => solved(design, { linear: denseReference }));
  return { sparseMs, denseMs, ratio: denseMs / sparseMs, unknowns: dense.system.circuit.n };
}
