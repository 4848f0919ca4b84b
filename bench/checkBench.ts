import { AGEING_SCENARIOS, buildStageGraph, checkMargins, LevelChain, loadDesign, solveOperatingPoint, type CheckOptions, type CheckResult, type Design, type StageGraph } from '../lib/index.js';
import { receiverThresholds } from '../lib/analysis/receiverThresholds.js';
import { generateRegister, generateVariedRegister, VARIED_SEED } from './generate.js';

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

/** A generated design, loaded (it must have no errors) with its stage graph. */
function loaded(text: string): { design: Design; graph: StageGraph } {
  const r = loadDesign('generated.tube', text);
  if (!r.ok || !r.design) throw new Error('the generated design has errors');
  return { design: r.design, graph: buildStageGraph(r.design) };
}

/** `checkMargins` of a loaded design, with its wall time in milliseconds. */
function timedCheck(design: Design, graph: StageGraph, options: CheckOptions = {}): { ms: number; result: CheckResult } {
  const t0 = performance.now();
  const result = checkMargins(design, { graph, ...options });
  const ms = performance.now() - t0;
  if (!('verdict' in result)) throw new Error('the generated design does not compile');
  return { ms, result };
}

/** One nominal full-circuit solve from scratch (compile, symbolic analysis, Newton), in milliseconds; it must converge. */
function timedSolve(design: Design, graph: StageGraph): number {
  const t0 = performance.now();
  const op = solveOperatingPoint(design, { graph });
  const ms = performance.now() - t0;
  if (!('nodes' in op) || !op.converged) throw new Error('the generated design did not solve');
  return ms;
}

/**
 * `check` against one nominal full-circuit solve of the same generated register, in one
 * run: each measured `runs` times after a warm-up, medians reported.
 */
export function benchCheck(sizes: number[], runs = 7): CheckBenchRow[] {
  return sizes.map((stages) => {
    const text = generateRegister(stages);
    const { design, graph } = loaded(text);
    const checks: number[] = [];
    const solves: number[] = [];
    const fronts: number[] = [];
    const rated: number[] = [];
    let last = timedCheck(design, graph).result;
    timedSolve(design, graph);
    for (let i = 0; i < runs; i++) {
      const check = timedCheck(design, graph);
      last = check.result;
      checks.push(check.ms);
      solves.push(timedSolve(design, graph));
      const t0 = performance.now();
      buildStageGraph(loadDesign('generated.tube', text).design!);
      fronts.push(performance.now() - t0);
      rated.push(timedCheck(design, graph, { ratings: true }).ms);
    }
    return { stages, nets: graph.nets.length, checkMs: median(checks), solveMs: median(solves), frontMs: median(fronts), withRatingsMs: median(rated), localSolves: last.localSolves, verdict: last.verdict, decided: decidedNets(last.nets) };
  });
}


/**
 * How far a check's thresholds are from the straightforward search's (issue #16): every
 * receiving input's worst VIL and VIH searched again with none of check's shortcuts
 * (`receiverThresholds(…, true)`: every part tried, every corner swept whole, nothing
 * shared), on a level chain of its own. The largest difference in volts, over `compared`
 * inputs; `missing` counts inputs one side has thresholds for and the other not.
 */
export function straightforwardDifference(design: Design, graph: StageGraph, check: CheckResult): { compared: number; largest: number; missing: number } {
  const chain = new LevelChain(design, graph, AGEING_SCENARIOS[0]!);
  chain.run();
  let compared = 0;
  let largest = 0;
  let missing = 0;
  for (const n of check.nets) {
    const net = graph.nets.find((g) => g.name === n.name)!;
    for (const rc of n.receivers) {
      const t = receiverThresholds(chain, n.name, net.receivers.find((r) => r.section === rc.section)!, true);
      if (t?.vilMin === undefined || t.vihMax === undefined || rc.vilMin === undefined || rc.vihMax === undefined) {
        missing += t?.vilMin === rc.vilMin && t?.vihMax === rc.vihMax ? 0 : 1;
        continue;
      }
      largest = Math.max(largest, Math.abs(t.vilMin - rc.vilMin), Math.abs(t.vihMax - rc.vihMax));
      compared++;
    }
  }
  return { compared, largest, missing };
}

/** How many weak nets the refinement row plants in the varied register. */
export const WEAK_NETS = 4;

export interface VariedCheckRow {
  stages: number;
  nets: number;
  /** `checkMargins` on the loaded design and its stage graph, one run (ms): a run takes seconds to minutes. */
  checkMs: number;
  /** One nominal full-circuit solve from scratch (ms, median of seven after a warm-up, as the uniform rows). */
  solveMs: number;
  localSolves: number;
  verdict: string;
  decided: string;
  /** The weakest net's slack against the required margin (volts; `NetCheck.slack`): how much room the bounds leave. */
  leastSlack: number;
  /** The process's peak resident memory after this check (`process.resourceUsage().maxRSS`, MiB): the sizes run in rising order, so it is this size's peak. */
  maxRssMiB: number;
  /** At the sizes asked for (`straightforwardAt`), how far its thresholds are from the straightforward search's. */
  straightforward?: { compared: number; largest: number; missing: number };
}

/**
 * The varied register of each size (seed `VARIED_SEED`), checked once, beside the median
 * of seven nominal full solves. At sizes up to `straightforwardAt` the thresholds are held
 * to the straightforward search's (`straightforwardDifference`, after the timings): more
 * than 1 mV apart, or an input one of them has no thresholds for, throws.
 */
export function benchVariedCheck(sizes: number[], weakNets = 0, straightforwardAt = 0): VariedCheckRow[] {
  return sizes.map((stages) => {
    const { design, graph } = loaded(generateVariedRegister(stages, VARIED_SEED, { weakNets }));
    timedSolve(design, graph);
    const solveMs = median(Array.from({ length: 7 }, () => timedSolve(design, graph)));
    const { ms, result } = timedCheck(design, graph);
    const maxRssMiB = process.resourceUsage().maxRSS / 1024;
    const straightforward = stages <= straightforwardAt ? straightforwardDifference(design, graph, result) : undefined;
    if (straightforward && (straightforward.largest > 1e-3 || straightforward.missing > 0)) throw new Error(`check's thresholds at ${stages} stages are ${(straightforward.largest * 1e3).toFixed(2)} mV from the straightforward search's, ${straightforward.missing} inputs on one side only`);
    return { stages, nets: graph.nets.length, checkMs: ms, solveMs, localSolves: result.localSolves, verdict: result.verdict, decided: decidedNets(result.nets), leastSlack: result.nets[0]!.slack, maxRssMiB, straightforward };
  });
}

/**
 * The varied-register table for docs/PERFORMANCE.md: each size's row, the scaling
 * exponent of check from the first size to the last, the peak memory at the last, and
 * the refinement row: the same design as one of the sizes with `WEAK_NETS` nets weakened,
 * its check time against the row's.
 */
export function variedCheckTable(rows: VariedCheckRow[], weak: VariedCheckRow | undefined, command: string): string {
  const first = rows[0]!;
  const last = rows[rows.length - 1]!;
  const same = weak && rows.find((r) => r.stages === weak.stages);
  const exponent = Math.log(last.checkMs / first.checkMs) / Math.log(last.stages / first.stages);
  return [
    `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`${command}\` (seed ${VARIED_SEED}; check run once a size, the solve the median of seven).`,
    '',
    '| stages | nets | check | one nominal full solve | check ÷ solve | local solves | verdict | least slack |',
    '|---:|---:|---:|---:|---:|---:|---|---:|',
    ...rows.map((r) => `| ${r.stages.toLocaleString('en')} | ${r.nets.toLocaleString('en')} | ${(r.checkMs / 1000).toFixed(1)} s | ${r.solveMs.toFixed(0)} ms | **${(r.checkMs / r.solveMs).toFixed(0)}×** | ${r.localSolves.toLocaleString('en')} | ${r.verdict} (${r.decided}) | ${r.leastSlack.toFixed(2)} V |`),
    '',
    ...(rows.length > 1 ? [`- Scaling exponent of check, ${first.stages.toLocaleString('en')} → ${last.stages.toLocaleString('en')} stages: ${exponent.toFixed(2)} (goal ≤ 1.1).`] : []),
    `- Peak resident memory after the ${last.stages.toLocaleString('en')}-stage check: ${last.maxRssMiB.toFixed(0)} MiB (goal under 1 GiB at 8,000 stages).`,
    ...rows.flatMap((r) => (r.straightforward ? [`- Against the straightforward threshold search (every part tried, every corner swept whole, nothing shared) at ${r.stages.toLocaleString('en')} stages: ${r.straightforward.compared.toLocaleString('en')} receiving inputs, largest difference ${(r.straightforward.largest * 1e3).toFixed(3)} mV (goal ≤ 1 mV; the bench stops if it is not).`] : [])),
    ...(weak && same
      ? [
          `- Refinement: the ${weak.stages.toLocaleString('en')}-stage design with ${WEAK_NETS} weak nets planted (\`weakNets: ${WEAK_NETS}\`) checks in ${(weak.checkMs / 1000).toFixed(1)} s, **${(weak.checkMs / same.checkMs).toFixed(2)}×** the same design without them (goal ≤ 2×); ${weak.localSolves.toLocaleString('en')} local solves; ${weak.verdict} (${weak.decided}).`,
        ]
      : []),
  ].join('\n');
}
