import { E_SERIES, tuneStage, type SeriesName, type TuneCandidate } from '../lib/index.js';
import { formatSI, table, wrap } from '../lib/report/format.js';
import { withProgress } from './progress.js';
import type { CliIo } from './io.js';
import { tuneOutcome, tuneToJson } from '../lib/report/tuneReport.js';
import { EXIT, loadForCommand, readRequirement, report, usageError, type GlobalOptions } from './load.js';

export const TUNE_SUMMARY = "choose a stage's resistors from a preferred-value series for the best margins";

export const TUNE_HELP = `
Tries the stage's plate load, input series resistors and pull-downs at the values of an
IEC 60063 series (E12 by default) around their present ones, judging each choice by the
worst-case check, and prints the best few: the weakest slack of the nets the stage
touches (its own and those feeding it), the stage's drive margin and its plate load's
power against half its rating. Choices that keep the drive margin at 0 V or more and the
load within half its rating come first.
Exit code 0 when a choice passes, 1 when none does, 2 for bad input.`;

export interface TuneCliOptions extends GlobalOptions {
  stage?: string;
  series?: string;
  margin?: string;
  age?: string;
  json?: boolean;
}

export async function runTune(file: string, options: TuneCliOptions, io: CliIo): Promise<number> {
  const stage = options.stage;
  if (!stage) return usageError(io, 'name the stage to tune: --stage NET');
  const series = (options.series ?? 'E12') as SeriesName;
  if (!(series in E_SERIES)) return usageError(io, `--series takes one of ${Object.keys(E_SERIES).join(', ')}, not '${options.series}'`);
  const requirement = readRequirement(options, io);
  if (typeof requirement === 'number') return requirement;
  const { margin, scenario } = requirement;
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const r = await withProgress(io, 'tune', (onProgress) => tuneStage(loaded.design, { stage, series, requiredMargin: margin, scenario, onProgress }));
  if (!('best' in r)) {
    report(r.diagnostics, loaded.sources, io);
    return EXIT.badInput;
  }
  const row = (label: string, c: TuneCandidate) => [
    label,
    formatSI(c.load, 'Ω'),
    formatSI(c.series, 'Ω'),
    formatSI(c.pulldown, 'Ω'),
    c.slack.toFixed(2),
    c.weakestNet ?? '—',
    c.driveMargin === undefined ? '—' : c.driveMargin.toFixed(2),
    `${Math.round(c.loadShare * 100)} %`,
    tuneOutcome(c),
  ];
  const passed = r.best[0] && r.best[0].withinLimits && r.best[0].slack >= 0 ? EXIT.ok : EXIT.failed;
  if (options.json) {
    io.stdout(JSON.stringify(tuneToJson(loaded.design, stage, series, r), null, 2) + '\n');
    return passed;
  }
  const lines = [
    ...wrap(`Stage ${stage} of ${file}: ${r.evaluated} choices from ${series} judged by the worst-case check.`, 80),
    '',
    ...table(
      ['', 'load', 'series', 'pull-down', 'slack', 'weakest', 'drive', 'load P', 'outcome'],
      [row('  now', r.present), ...r.best.map((c, i) => row(`  ${i + 1}.`, c))],
      [5, 8, 8, 9, 6, 12, 6, 6],
    ),
    '',
    '  (slack: the smallest margin less the required one among the nets the stage',
    '  touches, volts; drive: the ON grid against the cathode; load P: the plate',
    "  load's power as a share of its rating, at most 50 %)",
  ];
  io.stdout(lines.join('\n') + '\n');
  return passed;
}
