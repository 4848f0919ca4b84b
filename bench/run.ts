import { benchDrawing, drawingTable } from './drawBench.js';
import { readFileSync, writeFileSync } from 'node:fs';
import { buildStageGraph, loadDesign } from '../lib/index.js';
import { generateRegister } from './generate.js';
import { againstDense, benchSizes, iterationAgainstModels } from './solverBench.js';
import { benchCheck, benchVariedCheck, variedCheckTable, WEAK_NETS } from './checkBench.js';
import { benchDemoYield, benchSampling } from './samplingBench.js';
import { benchPulse } from './pulseBench.js';
import { familyDesigns, gateDesigns } from './family.js';
import { runFamily } from './familyOracle.js';
import { benchStartup, startupTable } from './startupBench.js';

/**
 * `npm run bench`: measures, in one run, what the goals in docs/PERFORMANCE.md are about,
 * and prints Markdown tables. `npm run bench -- --write` also replaces the measured
 * sections of docs/PERFORMANCE.md (between their bench markers) with the new tables.
 */

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)] as number;
}

/** Median wall time of `fn` in milliseconds over `runs` runs after one warm-up. */
function time(fn: () => void, runs: number): number {
  fn();
  const samples: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    fn();
    samples.push(performance.now() - t0);
  }
  return median(samples);
}

const rows: string[] = [];
const sizes = [500, 2000, 8000];
const front: number[] = [];
for (const stages of sizes) {
  const text = generateRegister(stages);
  let parts = 0;
  const load = time(() => {
    const r = loadDesign('generated.tube', text);
    if (!r.ok) throw new Error('generated design has errors');
    parts = r.design!.parts.length;
  }, 7);
  const design = loadDesign('generated.tube', text).design!;
  const graph = time(() => void buildStageGraph(design), 7);
  front.push(load);
  rows.push(`| ${stages.toLocaleString('en')} | ${parts.toLocaleString('en')} | ${(text.length / 1024).toFixed(1)} KiB | ${load.toFixed(1)} ms | ${graph.toFixed(1)} ms |`);
}
const exponent = Math.log((front[2] as number) / (front[0] as number)) / Math.log((sizes[2] as number) / (sizes[0] as number));

const table = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`.`,
  '',
  '| stages | parts | text | parse + expand + validate | stage graph |',
  '|---:|---:|---:|---:|---:|',
  ...rows,
  '',
  `Scaling exponent of parse + expand from ${sizes[0]} to ${sizes[2]} stages: ${exponent.toFixed(2)} (1.00 is linear).`,
].join('\n');

process.stdout.write(table + '\n');

// ---- the DC solver --------------------------------------------------------------------
const sizesSolve = [250, 1000, 4000];
const solveRows = benchSizes(sizesSolve);
const first = solveRows[0]!;
const last = solveRows[solveRows.length - 1]!;
const span = Math.log(last.stages / first.stages);
const perSolveExp = Math.log(last.warmMs / first.warmMs) / span;
const perIterExp = Math.log(last.perIterationMs / first.perIterationMs) / span;
const iter = iterationAgainstModels(4000);
process.stdout.write('measuring the dense reference (mathjs) at 200 stages; this takes a minute or two\n');
const dense = againstDense(200);
const solverTable = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`.`,
  '',
  '| stages | unknowns | sections | first solve | solve, analysis reused | Newton iterations | per iteration |',
  '|---:|---:|---:|---:|---:|---:|---:|',
  ...solveRows.map((r) => `| ${r.stages.toLocaleString('en')} | ${r.unknowns.toLocaleString('en')} | ${r.sections.toLocaleString('en')} | ${r.coldMs.toFixed(1)} ms | ${r.warmMs.toFixed(1)} ms | ${r.iterations} | ${r.perIterationMs.toFixed(2)} ms |`),
  '',
  `- Scaling exponent, ${first.stages} → ${last.stages} stages: ${perSolveExp.toFixed(2)} per solve, ${perIterExp.toFixed(2)} per Newton iteration (goal ≤ 1.1).`,
  `- Against the dense reference at 200 stages (${dense.unknowns} unknowns), the same full solve: sparse ${dense.sparseMs.toFixed(1)} ms, mathjs dense ${(dense.denseMs / 1000).toFixed(1)} s: **${Math.round(dense.ratio).toLocaleString('en')}×** (goal ≥ 300×).`,
  `- One Newton iteration at 4,000 stages (assemble, factor, solve) takes ${iter.iterationUs.toFixed(0)} µs; evaluating every section's equations once takes ${iter.modelsUs.toFixed(0)} µs: **${iter.ratio.toFixed(2)}×** (goal ≤ 3×).`,
].join('\n');
process.stdout.write(solverTable + '\n');

// ---- check ---------------------------------------------------------------------------
const checkRows = benchCheck([500, 2000, 8000]);
const at2000 = checkRows.find((r) => r.stages === 2000)!;
const checkExp = Math.log(checkRows[2]!.checkMs / checkRows[0]!.checkMs) / Math.log(checkRows[2]!.stages / checkRows[0]!.stages);
const checkTable = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`.`,
  '',
  '| stages | nets | check | one nominal full solve | check ÷ solve | local solves | read + stage graph | with ratings and budgets |',
  '|---:|---:|---:|---:|---:|---:|---:|---:|',
  ...checkRows.map((r) => `| ${r.stages.toLocaleString('en')} | ${r.nets.toLocaleString('en')} | ${r.checkMs.toFixed(0)} ms | ${r.solveMs.toFixed(0)} ms | ${(r.checkMs / r.solveMs).toFixed(1)}× | ${r.localSolves} | ${r.frontMs.toFixed(0)} ms | ${r.withRatingsMs.toFixed(0)} ms |`),
  '',
  `- At 2,000 stages: check ${at2000.checkMs.toFixed(0)} ms (goal ≤ 250 ms), **${(at2000.checkMs / at2000.solveMs).toFixed(1)}×** one nominal full-circuit solve (goal ≤ 10×); with reading the text and building the stage graph, as the command does, ${(at2000.checkMs + at2000.frontMs).toFixed(0)} ms.`,
  `- Scaling exponent of check, ${checkRows[0]!.stages} → ${checkRows[2]!.stages} stages: ${checkExp.toFixed(2)}; local solves stay at ${checkRows.map((r) => r.localSolves).join(', ')}: one per class of identical nets, not per net.`,
  `- Ratings and budgets (issue #7), which the \`check\` command adds, need a nominal full solve for rail currents and resistor powers: ${at2000.withRatingsMs.toFixed(0)} ms in all at 2,000 stages.`,
  `- Verdicts: ${checkRows.map((r) => `${r.stages.toLocaleString('en')} stages ${r.verdict} (${r.decided})`).join('; ')}. ${
    checkRows.every((r) => r.verdict === 'pass')
      ? 'Every net passes by its bounds, so refinement (rail boxes, corner searches) is never entered: the table is the cost of the bounds alone.'
      : 'Where a bound misses the required margin, refinement runs and is counted in the table: rail boxes first, then corners of the whole design, which a register this large cannot search (`CORNER_WORK`), so each class of alike nets is tried at the corner its bound comes from on the spare budget (`SPARE_WORK`, about a second); what no corner tried shows failing is UNDECIDED.'
  }`,
].join('\n');
process.stdout.write(checkTable + '\n');

// ---- check on the varied register (issue #16) ------------------------------------------
process.stdout.write('checking the varied register at 500, 2,000 and 8,000 stages, and at 2,000 with weak nets; this takes many minutes\n');
const variedRows = benchVariedCheck([500, 2000, 8000], 0, 500);
const variedTable = variedCheckTable(variedRows, benchVariedCheck([2000], WEAK_NETS)[0], 'npm run bench');
process.stdout.write(variedTable + '\n');

// ---- check against the oracle family ------------------------------------------------------
const family = runFamily(familyDesigns(2026015, 45), 200);
const judged = family.comparisons.flatMap((c) => c.verdicts);
const count = (status: string, basis: string) => judged.filter((v) => v.status === status && v.basis === basis).length;
const familyTable = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\` (bench/family.ts, seed 2026015; every corner, 200 interior points and an even grid of every band walked from each level's worst point, each design solved whole).`,
  '',
  '| figure | value |',
  '|---|---:|',
  `| designs (latches, fan-outs, chains) | ${family.designs} |`,
  `| levels compared | ${family.levels} |`,
  `| levels reported better than the truth (optimistic; goal 0) | **${family.optimistic.length}** |`,
  `| bound's pessimism, median / worst (goal 0.1 V / 0.5 V) | ${family.median.toFixed(2)} V / ${family.worst.toFixed(2)} V |`,
  `| latch verdicts equal to "both states exist at every point" | **${family.latchAgree} of ${family.latches}** (${family.comparisons.filter((c) => c.latch?.truth).length} hold) |`,
  `| witnesses printed / reproduced by re-solving the whole design | ${family.witnesses} / ${family.witnesses - family.unreproduced.length} |`,
  `| nets: ok by bounds / ok by corners / FAIL with a witness / FAIL by bound / UNDECIDED | ${count('pass', 'bounds')} / ${count('pass', 'corners')} / ${count('fail', 'witness')} / ${count('fail', 'bounds')} / ${count('undecided', 'undecided')} |`,
  `| check, all ${family.designs} designs | ${(family.checkMs / 1000).toFixed(1)} s (${(family.checkMs / family.designs).toFixed(0)} ms a design) |`,
  `| the truth, all ${family.designs} designs | ${family.solves.toLocaleString('en')} whole-circuit solves, ${((family.ms - family.checkMs) / 1000).toFixed(1)} s |`,
].join('\n');
process.stdout.write(familyTable + '\n');

// ---- check against the gate family: combinations of two buttons -------------------------
const gates = runFamily(gateDesigns(2026016, 20), 100);
const gateVerdicts = gates.comparisons.flatMap((c) => c.verdicts);
const gateTable = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\` (bench/family.ts \`gateDesigns\`, seed 2026016; every corner in each of the four button states, 100 interior points and the grid walk, each design solved whole).`,
  '',
  '| figure | value |',
  '|---|---:|',
  `| designs (two buttons, a NOR, an inverter, a second NOR) | ${gates.designs} |`,
  `| levels compared | ${gates.levels} |`,
  `| levels reported better than the truth (optimistic; goal 0) | **${gates.optimistic.length}** |`,
  `| bound's pessimism, median / worst (goal 0.1 V / 0.5 V) | ${gates.median.toFixed(2)} V / ${gates.worst.toFixed(2)} V |`,
  `| witnesses printed / reproduced | ${gates.witnesses} / ${gates.witnesses - gates.unreproduced.length} |`,
  `| nets: ok by bounds / ok by corners / FAIL with a witness / FAIL by bound / UNDECIDED | ${['pass/bounds', 'pass/corners', 'fail/witness', 'fail/bounds', 'undecided/undecided'].map((k) => gateVerdicts.filter((v) => `${v.status}/${v.basis}` === k).length).join(' / ')} |`,
  `| check, all ${gates.designs} designs | ${(gates.checkMs / 1000).toFixed(1)} s (${(gates.checkMs / gates.designs).toFixed(0)} ms a design) |`,
].join('\n');
process.stdout.write(gateTable + '\n');

// ---- Monte Carlo ---------------------------------------------------------------------
const sampling = await benchSampling(2000, 100, 500);
const demo1 = await benchDemoYield('nets/crate-tally.tube', 10_000, 1);
const demo2 = await benchDemoYield('nets/crate-tally.tube', 10_000, 2);
const samplingTable = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`.`,
  '',
  '| what | 1 worker | 2 workers | speed-up |',
  '|---|---:|---:|---:|',
  `| full DC solves per second, generated ${sampling.stages.toLocaleString('en')}-stage register, once running | ${sampling.rate[1]!.toFixed(0)} | **${sampling.rate[2]!.toFixed(0)}** | ${(sampling.rate[2]! / sampling.rate[1]!).toFixed(2)}× |`,
  `| the same, 500 samples (${500 * sampling.solvesPerSample} solves) with setup | ${(sampling.wholeMs[1]! / 1000).toFixed(2)} s | ${(sampling.wholeMs[2]! / 1000).toFixed(2)} s | ${(sampling.wholeMs[1]! / sampling.wholeMs[2]!).toFixed(2)}× |`,
  `| 10,000-sample yield of nets/crate-tally.tube, check included | ${(demo1.ms / 1000).toFixed(2)} s | **${(demo2.ms / 1000).toFixed(2)} s** | ${(demo1.ms / demo2.ms).toFixed(2)}× |`,
  '',
  `- Goals (issue #5): ≥ 300 full DC solves per second at 2,000 stages on both cores; a 10,000-sample yield of the demo in under 10 s. The demo's yield: ${(100 * demo2.yield).toFixed(2)} % (the same with 1 worker: ${demo1.yield === demo2.yield ? 'yes' : 'NO'}).`,
].join('\n');
process.stdout.write(samplingTable + '\n');

// ---- simulation in time ----------------------------------------------------------------
const pulse = benchPulse();
const pulseTable = [
  `Measured ${new Date().toISOString().slice(0, 10)} on ${process.platform}/${process.arch}, Node ${process.version}, by \`npm run bench\`.`,
  '',
  '| what | time | steps (taken again) | Newton iterations | per step |',
  '|---|---:|---:|---:|---:|',
  `| nets/crate-tally.tube, 3 two-phase clocks at 100 µs (${pulse.unknowns} unknowns, ${pulse.capacitors} capacitors) | ${(pulse.runMs / 1000).toFixed(2)} s | ${pulse.steps.toLocaleString('en')} (${pulse.rejected}) | ${pulse.iterations.toLocaleString('en')} | ${((pulse.runMs * 1000) / (pulse.steps + pulse.rejected)).toFixed(0)} µs |`,
  `| fastest-clock search on the same, 3 corners | ${(pulse.limitMs / 1000).toFixed(1)} s | ${pulse.runs} simulations | | |`,
  '',
  `- Fastest clock found: ${pulse.passing === undefined ? 'none' : `${(pulse.passing * 1e6).toFixed(2)} µs (${(1e-3 / pulse.passing).toFixed(1)} kHz)`}; it fails just faster in the ${pulse.corner ?? '—'} corner; limiting stage ${pulse.limiting ?? '—'}.`,
].join('\n');
process.stdout.write(pulseTable + '\n');

// ---- start-up ----------------------------------------------------------------------------
const startup = startupTable(benchStartup());
process.stdout.write(startup + '\n');

// ---- drawing -----------------------------------------------------------------------------
const drawing = drawingTable(await benchDrawing(), 'npm run bench');
process.stdout.write(drawing + '\n');

if (process.argv.includes('--write')) {
  const path = new URL('../../docs/PERFORMANCE.md', import.meta.url);
  let doc = readFileSync(path, 'utf8');
  const put = (name: string, body: string) => {
    const start = `<!-- bench:${name}:start -->`;
    const end = `<!-- bench:${name}:end -->`;
    const a = doc.indexOf(start);
    const b = doc.indexOf(end);
    if (a < 0 || b < a) throw new Error(`docs/PERFORMANCE.md lacks the ${name} markers`);
    doc = doc.slice(0, a + start.length) + '\n' + body + '\n' + doc.slice(b);
  };
  put('front-end', table);
  put('solver', solverTable);
  put('check', checkTable);
  put('check-varied', variedTable);
  put('family', familyTable);
  put('gates', gateTable);
  put('sampling', samplingTable);
  put('pulse', pulseTable);
  put('startup', startup);
  put('drawing', drawing);
  writeFileSync(path, doc);
  process.stdout.write('docs/PERFORMANCE.md updated\n');
}
