import { fitReadings, parseReadings, type ModelKind } from '../lib/index.js';
import { FIT_MARK, fitToJson, fitToText } from '../lib/report/fitReport.js';
import type { CliIo } from './io.js';
import { EXIT, report, usageError, type GlobalOptions } from './load.js';
import { chalkFor } from './style.js';

export const FIT_SUMMARY = 'fit a tube model to your own bench readings (CSV)';

export const FIT_HELP = `
Reads bench readings (CSV with a header row: tube,plate_v,grid_v,plate_ma, and for
pentodes screen_v and optionally screen_ma; volts against the cathode, milliamps), or
meter readings of the plate across a known load, the tube in a stage on the bench
(tube,supply_v,load_ohms,plate_v with grid_v or the grid's divider
drive_v,series_ohms,pulldown_ohms,bias_v, and optionally meter_ohms: the plate current
is (supply - plate) / load less the meter's share), fits the chosen model kind to them, one perveance factor per tube, and prints a type
definition to include in a design: the parameters, the spread the tubes showed, the
plate voltages to trust it over and how well it fits. Refuses too few or degenerate
readings rather than give a wild fit. -o writes the definition to a file (only a new
one, or one fit wrote before).`;

export interface FitCliOptions extends GlobalOptions {
  kind?: string;
  output?: string;
  name?: string;
  json?: boolean;
}

const KINDS: ModelKind[] = ['koren-triode', 'koren-pentode', 'child-langmuir'];

export function runFit(file: string, options: FitCliOptions, io: CliIo): number {
  const kind = options.kind as ModelKind;
  if (options.kind === undefined) return usageError(io, `name the model kind to fit: --kind ${KINDS.join(', --kind ')}`);
  if (!KINDS.includes(kind)) return usageError(io, `--kind takes one of ${KINDS.join(', ')}, not '${options.kind}'`);
  const name = options.name ?? 'BENCH';
  if (!/^[A-Za-z_][A-Za-z0-9_]*$/.test(name)) return usageError(io, `--name takes a type name (letters, digits, _), not '${name}'`);
  let text: string;
  try {
    text = io.readFile(file);
  } catch (e) {
    io.stderr(`${chalkFor(io, 'stderr').red.bold('error')}: cannot read ${file}: ${(e as Error).message} [file-unreadable]\n`);
    return EXIT.badInput;
  }
  const sources = new Map([[file, text]]);
  const parsed = parseReadings(file, text);
  if (parsed.diagnostics.length > 0) {
    report(parsed.diagnostics, sources, io, 'the readings have errors; fix them and run again');
    return EXIT.badInput;
  }
  const answer = fitReadings(parsed.value, kind);
  if ('refusal' in answer) {
    report([{ code: 'fit-refused', severity: 'error', message: `no fit: ${answer.refusal}`, span: undefined, notes: [] }], sources, io, '');
    return EXIT.badInput;
  }
  const out = options.json ? JSON.stringify(fitToJson(answer.fit), null, 2) + '\n' : fitToText(answer.fit, name, file);
  if (!options.output) {
    io.stdout(out);
    return EXIT.ok;
  }
  if (!io.writeFile) return usageError(io, 'this run cannot write files');
  let existing: string | undefined;
  try {
    existing = io.readFile(options.output);
  } catch {
    existing = undefined;
  }
  if (existing !== undefined && !existing.startsWith(FIT_MARK) && !existing.startsWith('{\n  "schema": "tubemargin.fit/1"')) return usageError(io, `${options.output} exists and was not written by fit: choose another name, or move it away`);
  try {
    io.writeFile(options.output, out);
  } catch (e) {
    return usageError(io, `cannot write ${options.output}: ${(e as Error).message}`);
  }
  io.stderr(`wrote ${options.output}\n`);
  return EXIT.ok;
}
