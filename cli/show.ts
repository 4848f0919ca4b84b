import { buildStageGraph, designToJson } from '../lib/index.js';
import { renderShow } from '../lib/report/showText.js';
import type { CliIo } from './io.js';
import { EXIT, loadForCommand, type GlobalOptions } from './load.js';

export const SHOW_SUMMARY = 'print the expanded design: rails, tube types, stages, nets, loops';

export const SHOW_HELP = `
Reads a design (design-language text or a tubemargin.design/1 JSON file), expands its
blocks and stages, and prints what it became: every rail, tube type and stage, every
logic net with its driver, fan-out and the stages it feeds, and the loops (latches,
rings) found in the stage graph. With --json, prints the flat design as
tubemargin.design/1 JSON, which every command accepts in place of the text.`;

export function runShow(file: string, options: GlobalOptions & { json?: boolean }, io: CliIo): number {
  const design = loadForCommand(file, io, options)?.design;
  if (!design) return EXIT.badInput;
  if (options.json) {
    io.stdout(JSON.stringify(designToJson(design), null, 2) + '\n');
    return EXIT.ok;
  }
  io.stdout(renderShow(design, buildStageGraph(design), file));
  return EXIT.ok;
}
