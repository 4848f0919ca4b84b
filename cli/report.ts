import { solveOperatingPoint, sweepRails } from '../lib/index.js';
import { REPORT_MARK, renderHtmlReport } from '../lib/report/htmlReport.js';
import { checkWithSamples, readCheckOptions, type CheckCliOptions } from './check.js';
import { withProgress } from './progress.js';
import type { CliIo } from './io.js';
import { EXIT, loadForCommand, report, usageError } from './load.js';
import { readSweepOptions } from './sweep.js';

export const REPORT_SUMMARY = 'write a self-contained HTML report: verdict, nets, plots, design facts';

export const REPORT_HELP = `
Runs check (and, when asked, a Monte Carlo run and a supply sweep) and writes one
HTML page that opens offline: the verdict, the safety cautions when a rail exceeds
60 V, nets weakest first, a chart of every net's margin, each kind of latch's
butterfly with its largest squares, each kind of stage's transfer curve with VOL,
VOH, VIL and VIH, Monte Carlo histograms, the supply map and the design's facts.
It overwrites only an earlier tubemargin report, never another file.
Exit code 0 when the design passes, 1 when it fails, 2 for bad input.`;

export interface ReportCliOptions extends CheckCliOptions {
  output?: string;
  rail?: string[];
  heater?: string;
}

/**
 * Nothing the user wrote is overwritten: a report goes only where no file is, or over an
 * earlier tubemargin report (a file that starts with `ours.mark`). Returns the exit code of
 * the refusal (printed), or undefined.
 */
export function refuseToOverwrite(out: string, io: CliIo, ours: { mark: string; what: string } = { mark: REPORT_MARK, what: 'a tubemargin report' }): number | undefined {
  if (!io.writeFile) return usageError(io, 'this run cannot write files');
  let existing: string | undefined;
  try {
    existing = io.readFile(out);
  } catch {
    existing = undefined;
  }
  if (existing !== undefined && !existing.startsWith(ours.mark)) return usageError(io, `${out} exists and is not ${ours.what}: choose another name, or move it away`);
  return undefined;
}

/** Writes a report (or `pulse`'s CSV) checked by `refuseToOverwrite`; returns the exit code of a failure (printed), or undefined. */
export function writeReport(out: string, html: string, io: CliIo): number | undefined {
  try {
    io.writeFile!(out, html);
  } catch (e) {
    return usageError(io, `cannot write ${out}: ${(e as Error).message}`);
  }
  return undefined;
}

export async function runReport(file: string, options: ReportCliOptions, io: CliIo): Promise<number> {
  const out = options.output;
  if (!out) return usageError(io, 'say where to write the report: -o FILE.html');
  const settings = readCheckOptions(options, io);
  if (typeof settings === 'number') return settings;
  const swept = readSweepOptions(options, io);
  if (typeof swept === 'number') return swept;
  const refused = refuseToOverwrite(out, io);
  if (refused !== undefined) return refused;
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const checked = await checkWithSamples(loaded, settings, io);
  if (typeof checked === 'number') return checked;
  let sweep;
  if (swept.axes.length > 0) {
    const r = await withProgress(io, 'supply map', (onProgress) => sweepRails(loaded.design, { axes: swept.axes, heater: swept.heater, requiredMargin: settings.margin, scenario: settings.scenario, onProgress }));
    if (!('grid' in r)) {
      report(r.diagnostics, loaded.sources, io);
      return EXIT.badInput;
    }
    sweep = r;
  }
  const op = solveOperatingPoint(loaded.design);
  const html = await renderHtmlReport({ design: loaded.design, check: checked.result, source: file, nominal: 'nodes' in op && op.converged ? op : undefined, samples: checked.sampled, sweep });
  const failed = writeReport(out, html, io);
  if (failed !== undefined) return failed;
  io.stderr(`wrote ${out}: ${checked.result.verdict.toUpperCase()}\n`);
  return checked.result.verdict === 'pass' ? EXIT.ok : EXIT.failed;
}
