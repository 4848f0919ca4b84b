import { sweepRails, type SweepAxis } from '../lib/index.js';
import { renderSweep, sweepToJson } from '../lib/report/sweepReport.js';
import { withProgress } from './progress.js';
import type { CliIo } from './io.js';
import { EXIT, loadForCommand, readRequirement, report, usageError, type GlobalOptions } from './load.js';

export const SWEEP_SUMMARY = 'supply window: the worst-case check over a grid of rail voltages';

export const SWEEP_HELP = `
Runs the worst-case check at every point of a grid of one or two rails' voltages
(each rail's tolerance kept), with the heaters at a chosen fraction of their
voltage: marginal checking before building. Prints a map of the points that pass,
and the operating window along each rail through the nominal point.

--rail NAME=FROM:TO:STEP  a rail to sweep, in volts (once or twice)
--heater F                heater voltage as a fraction of nominal (emission F²)
Exit code 0 when the nominal point passes, 1 when it fails, 2 for bad input.`;

export interface SweepCliOptions extends GlobalOptions {
  rail?: string[];
  heater?: string;
  margin?: string;
  age?: string;
  json?: boolean;
}

/** The swept rails and heater setting, read and checked; a number is the exit code of a usage error (printed). */
export function readSweepOptions(options: Pick<SweepCliOptions, 'rail' | 'heater'>, io: CliIo): { axes: SweepAxis[]; heater: number } | number {
  const axes: SweepAxis[] = [];
  const number = '(-?\\d+(?:\\.\\d+)?)';
  for (const text of options.rail ?? []) {
    const m = new RegExp(`^([^=\\s]+)=${number}:${number}:${number}$`).exec(text.trim());
    if (!m) return usageError(io, `--rail takes NAME=FROM:TO:STEP in volts, such as bp=18:30:0.5, not '${text}'`);
    axes.push({ rail: m[1]!, from: Number(m[2]), to: Number(m[3]), step: Number(m[4]) });
  }
  if (axes.length > 2) return usageError(io, 'give one or two --rail NAME=FROM:TO:STEP');
  const heater = options.heater === undefined ? 1 : Number(options.heater);
  if (!(heater > 0 && heater <= 1.5)) return usageError(io, `--heater takes a fraction of the nominal heater voltage from 0 to 1.5, not '${options.heater}'`);
  return { axes, heater };
}

export async function runSweep(file: string, options: SweepCliOptions, io: CliIo): Promise<number> {
  const read = readSweepOptions(options, io);
  if (typeof read === 'number') return read;
  const { axes, heater } = read;
  if (axes.length === 0) return usageError(io, 'give one or two --rail NAME=FROM:TO:STEP');
  const requirement = readRequirement(options, io);
  if (typeof requirement === 'number') return requirement;
  const { margin, scenario } = requirement;
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const result = await withProgress(io, 'sweep', (onProgress) => sweepRails(loaded.design, { axes, heater, requiredMargin: margin, scenario, onProgress }));
  if (!('grid' in result)) {
    report(result.diagnostics, loaded.sources, io);
    return EXIT.badInput;
  }
  if (options.json) io.stdout(JSON.stringify(sweepToJson(loaded.design, result), null, 2) + '\n');
  else io.stdout(renderSweep(loaded.design, result, file));
  const [i, j] = [result.nominalPoint[0]!, result.nominalPoint[1] ?? 0];
  return result.grid[j]![i]!.pass ? EXIT.ok : EXIT.failed;
}
