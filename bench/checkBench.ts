import { buildStageGraph, checkMargins, loadDesign, solveOperatingPoint } from '../lib/index.js';
import { generateRegister } from './generate.js';

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)] as number;
}

export interface CheckBenchRow {
  stages: number;
  nets: number;
  /** `checkMargins` on the loaded design and its stage graph (ms, median). */
  checkMs: number;
  /** One nominal full-circuit DC solve from scratch on the same design and graph: compile, symbolic analysis, Newton (ms, median). */
  solveMs: number;
  /** Reading the text and building the stage graph, which the command adds to both (ms, median). */
  frontMs: number;
  /** `checkMargins` with ratings and budgets, as the `check` command runs it (ms, median). */
  withRatingsMs: number;
  localSolves: number;
  verdict: string;
  /** The nets by how they were decided, e.g. "4 FAIL with a witness, 1,997 UNDECIDED". */
  decided: string;
}

/** How a check's nets were decided, in words: ok by bounds or corners, FAIL with a witness, UNDECIDED. */
function decidedNets(nets: readonly { status: string; basis: string }[]): string {
  const words: Record<string, string> = { 'pass/bounds': 'ok by bounds', 'pass/corners': 'ok by corners', 'fail/witness': 'FAIL with a witness', 'fail/bounds': 'FAIL by bound', 'undecided/undecided': 'UNDECIDED' };
  const counts = new Map<string, number>();
  for (const n of nets) counts.set(`${n.status}/${n.basis}`, (counts.get(`${n.status}/${n.basis}`) ?? 0) + 1);
  return [...counts].map(([k, c]) => `${c.toLocaleString('en')} ${words[k] ?? k}`).join(', ');
}

/**
 * `check` against one nominal full-circuit solve of the same generated register, in one
 * run: each measured `runs` times after a warm-up, medians reported.
 */
export function benchCheck(sizes: number[], runs = 7): CheckBenchRow[] {
  return sizes.map((stages) => {
    const text = generateRegister(stages);
    const design = loadDesign('generated.tube', text).design!;
    const graph = buildStageGraph(design);
    const checks: number[] = [];
    const solves: number[] = [];
    const fronts: number[] = [];
    const rated: number[] = [];
    const run = () => {
      const r = checkMargins(design, { graph });
      if (!('verdict' in r)) throw new Error('the generated design does not compile');
      return r;
    };
    let last = run();
    solveOperatingPoint(design, { graph });
    for (let i = 0; i < runs; i++) {
      let t0 = performance.now();
      last = run();
      checks.push(performance.now() - t0);
      t0 = performance.now();
      const op = solveOperatingPoint(design, { graph });
      solves.push(performance.now() - t0);
      if (!('nodes' in op) || !op.converged) throw new Error('the generated design did not solve');
      t0 = performance.now();
      buildStageGraph(loadDesign('generated.tube', text).design!);
      fronts.push(performance.now() - t0);
      t0 = performance.now();
      checkMargins(design, { graph, ratings: true });
      rated.push(performance.now() - t0);
    }
    return { stages, nets: graph.nets.length, checkMs: median(checks), solveMs: median(solves), frontMs: median(fronts), withRatingsMs: median(rated), localSolves: last.localSolves, verdict: last.verdict, decided: decidedNets(last.nets) };
  });
}
