import { buildStageGraph, checkMargins, designToJson } from '../lib/index.js';
import { DRAWING_MARK, FOLD_ABOVE, TAG_FANOUT } from '../lib/report/drawing.js';
import { renderShow } from '../lib/report/showText.js';
import type { CliIo } from './io.js';
import { EXIT, loadForCommand, report, usageError, type GlobalOptions } from './load.js';
import { withProgress } from './progress.js';

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
import { refuseToOverwrite, writeReport } from './report.js';

export const SHOW_SUMMARY = 'print the expanded design: rails, tube types, stages, nets, loops';

export const SHOW_HELP = `
Reads a design (design-language text or a tubemargin.design/1 JSON file), expands its
blocks and stages, and prints what it became: every rail, tube type and stage, every
logic net with its driver, fan-out and the stages it feeds, and the loops (latches,
rings) found in the stage graph. With --json, prints the flat design as
tubemargin.design/1 JSON, which every command accepts in place of the text.

--svg FILE draws the design: each stage a box with a pin per input, each logic
net one wire from its driver to every input it feeds, coloured by its
worst-case slack from a check (failing nets thick and dashed, undecided ones
dotted; --no-margins draws without checking), inputs down the left, rails
along the top, latches as pairs. A net feeding more than ${TAG_FANOUT} inputs is drawn
as a tag at each. Above ${FOLD_ABOVE} stages, block instances fold into one box each
and arrays into one box with a count (--fold, --unfold choose). The file is
written only where none is, or over an earlier drawing; --svg - prints it.
Exit code 0 once drawn, whatever the check's verdict (check gives that).`;

export interface ShowOptions extends GlobalOptions {
  json?: boolean;
  svg?: string;
  fold?: boolean;
  unfold?: boolean;
  /** False with --no-margins. */
  margins?: boolean;
}

export async function runShow(file: string, options: ShowOptions, io: CliIo): Promise<number> {
  if (options.fold && options.unfold) return usageError(io, '--fold and --unfold exclude each other');
  if (options.json && options.svg !== undefined) return usageError(io, '--json and --svg exclude each other: one prints the design, the other draws it');
  if (options.svg === undefined && (options.fold || options.unfold || options.margins === false)) return usageError(io, '--fold, --unfold and --no-margins shape a drawing: add --svg FILE');
  const toStdout = options.svg === '-';
  if (options.svg !== undefined && !toStdout) {
    const refused = refuseToOverwrite(options.svg, io, { mark: DRAWING_MARK, what: 'a tubemargin drawing' });
    if (refused !== undefined) return refused;
  }
  const loaded = loadForCommand(file, io, options);
  const design = loaded?.design;
  if (!loaded || !design) return EXIT.badInput;
  if (options.svg !== undefined) {
    const checked = options.margins === false ? undefined : await withProgress(io, 'check', (onProgress) => checkMargins(design, { onProgress }));
    if (checked && !('nets' in checked)) {
      report(checked.diagnostics, loaded.sources, io);
      return EXIT.badInput;
    }
    // The layout library is loaded here, with the drawing: no other command pays for it.
    const { drawDesign } = await import('../lib/report/drawing.js');
    const drawing = await drawDesign(design, buildStageGraph(design), { check: checked, fold: options.fold ? true : options.unfold ? false : undefined });
    const what = `${plural(drawing.boxes, 'box', 'boxes')}, ${plural(drawing.nets, 'net')}${drawing.folded ? ' (folded)' : ''}${checked ? `; check ${checked.verdict.toUpperCase()}` : ''}`;
    if (toStdout) {
      io.stdout(drawing.svg);
      return EXIT.ok;
    }
    const failed = writeReport(options.svg, drawing.svg, io);
    if (failed !== undefined) return failed;
    // A drawing is made whatever the verdict: the exit code says the drawing was written, not that the design passes.
    io.stderr(`wrote ${options.svg}: ${what}\n`);
    return EXIT.ok;
  }
  if (options.json) {
    io.stdout(JSON.stringify(designToJson(design), null, 2) + '\n');
    return EXIT.ok;
  }
  io.stdout(renderShow(design, buildStageGraph(design), file));
  return EXIT.ok;
}
