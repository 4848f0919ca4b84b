import { AGEING_SCENARIOS, checkMargins, DISTRIBUTIONS, samplingThresholds, shrinkFailure, type AgeingScenario, type CheckResult, type Design, type Distribution, type MonteCarloResult } from '../lib/index.js';
import { checkToJson, renderCheck } from '../lib/report/checkReport.js';
import { withProgress } from './progress.js';
import type { CliIo } from './io.js';
import { EXIT, loadForCommand, readRequirement, report, usageError, type GlobalOptions } from './load.js';
import { defaultWorkers, MAX_SAMPLES, runSamples } from './sampling.js';
import { chalkFor } from './style.js';

export const CHECK_SUMMARY = 'worst-case levels, noise margins, latches and fan-out: pass or fail';

export const CHECK_HELP = `
Works out, for every logic net, its worst-case high and low levels over
resistor and rail tolerances, tube spread and the chosen ageing scenario,
chained from stage to stage and settled around loops; the noise margins
against the unity-gain thresholds of every input it feeds; the cutoff and
drive margins of its sections; and how many more standard loads it could
feed. Every latch is checked for holding (both states exist at every corner)
and for switching from each set and reset input at its weakest asserted level.
Where a bound fails, the whole design is solved at the corners of the parts
that matter most: a corner that fails is printed as a witness (re-solve it
with solve --at), every corner passing passes it, and otherwise it is
UNDECIDED (exit 1: it may fail). Nets are listed weakest first; the weakest
three are explained by the parameters whose corners make them weak.

--margin overrides the design's required margin (defaults { margin = … }).
--age picks the ageing scenario: ${AGEING_SCENARIOS.map((s) => s.name).join(', ')}.
--samples N adds a Monte Carlo run: N full-circuit solves per latch state at
random values (--distribution ${DISTRIBUTIONS.join(', ')}; --seed S), the yield
with its 95 % interval, each net's margin distribution and the parts that go
with failures; --workers K spreads it over K threads (the same result).
--shrink searches for a failing set of part values (from the worst corners,
then 300 random ones) and shrinks it to the smallest deviations that fail.
Exit code 0 when everything passes, 1 when a margin or a latch fails or is
undecided, 2 for bad input.`;

export interface CheckCliOptions extends GlobalOptions {
  json?: boolean;
  margin?: string;
  age?: string;
  samples?: string;
  seed?: string;
  distribution?: string;
  workers?: string;
  shrink?: boolean;
}

/** Random cases `--shrink` tries after the worst corners. */
const SHRINK_RUNS = 300;

/** A whole number in [min, max], or undefined. */
function wholeNumber(text: string | undefined, min: number, max: number): number | undefined {
  if (text === undefined || !/^\d+$/.test(text.trim())) return undefined;
  const n = Number(text);
  return n >= min && n <= max ? n : undefined;
}

/** The options `check` and `report` share, read and checked; a usage error has been printed when it is a number (the exit code). */
export interface CheckSettings {
  margin: number | undefined;
  scenario: AgeingScenario;
  samples: number;
  seed: number;
  distribution: Distribution;
  workers: number;
}

export function readCheckOptions(options: CheckCliOptions, io: CliIo): CheckSettings | number {
  const bad = (message: string) => usageError(io, message);
  const requirement = readRequirement(options, io);
  if (typeof requirement === 'number') return requirement;
  const { margin, scenario } = requirement;
  const samples = options.samples === undefined ? 0 : wholeNumber(options.samples, 1, MAX_SAMPLES);
  if (samples === undefined) return bad(`--samples takes a whole number from 1 to ${MAX_SAMPLES.toLocaleString('en')}, not '${options.samples}'`);
  const seed = options.seed === undefined ? 1 : wholeNumber(options.seed, 0, 2 ** 32 - 1);
  if (seed === undefined) return bad(`--seed takes a whole number from 0 to 4294967295, not '${options.seed}'`);
  const distribution = (options.distribution ?? 'uniform') as Distribution;
  if (!DISTRIBUTIONS.includes(distribution)) return bad(`--distribution takes one of ${DISTRIBUTIONS.join(', ')}, not '${options.distribution}'`);
  const workers = options.workers === undefined ? defaultWorkers() : wholeNumber(options.workers, 1, 256);
  if (workers === undefined) return bad(`--workers takes a whole number from 1 to 256, not '${options.workers}'`);
  return { margin, scenario, samples, seed, distribution, workers };
}

/** The check of a loaded design and, when asked, its Monte Carlo run; a number is the exit code of a design that cannot be solved (reported). */
export async function checkWithSamples(loaded: { design: Design; sources: Map<string, string> }, settings: CheckSettings, io: CliIo): Promise<{ result: CheckResult; sampled: MonteCarloResult | undefined } | number> {
  const { margin, scenario, samples, seed, distribution, workers } = settings;
  const result = await withProgress(io, 'check', (onProgress) => checkMargins(loaded.design, { requiredMargin: margin, scenario, ratings: true, onProgress }));
  if (!('verdict' in result)) {
    report(result.diagnostics, loaded.sources, io);
    return EXIT.badInput;
  }
  const setup = { seed, distribution, scenario: scenario.name, requiredMargin: result.requiredMargin, thresholds: samplingThresholds(result) };
  // Samples and shrinking judge logic nets; a design with none (check then judges its ratings only) has nothing for them.
  const logic = result.nets.length > 0;
  if (!logic && samples > 0) io.stderr('note: --samples skipped: the design has no logic net for a sample to judge\n');
  const sampled = samples > 0 && logic ? await runSamples(loaded.design, setup, samples, workers, io) : undefined;
  return { result, sampled };
}

export async function runCheck(file: string, options: CheckCliOptions, io: CliIo): Promise<number> {
  const settings = readCheckOptions(options, io);
  if (typeof settings === 'number') return settings;
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const checked = await checkWithSamples(loaded, settings, io);
  if (typeof checked === 'number') return checked;
  const { result, sampled } = checked;
  const logic = result.nets.length > 0;
  if (options.shrink && !logic) io.stderr('note: --shrink skipped: the design has no logic net whose failure could be shrunk\n');
  const shrunk = options.shrink && logic ? shrinkFailure(loaded.design, result, { seed: settings.seed, runs: SHRINK_RUNS }) : undefined;
  if (options.json) io.stdout(JSON.stringify(checkToJson(loaded.design, result, sampled, shrunk), null, 2) + '\n');
  else {
    const text = renderCheck(loaded.design, result, file, sampled, shrunk);
    const out = chalkFor(io, 'stdout');
    io.stdout(text.replace(/^(PASS|FAIL|UNDECIDED)/m, (w) => (w === 'PASS' ? out.green.bold(w) : w === 'FAIL' ? out.red.bold(w) : out.yellow.bold(w))));
  }
  return result.verdict === 'pass' ? EXIT.ok : EXIT.failed;
}
