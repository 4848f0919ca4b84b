import { AGEING_SCENARIOS, buildStageGraph, closestName, designNets, findScenario, hasErrors, loadDesign, type AgeingScenario, type Design, type Diagnostic, type StateHint } from '../lib/index.js';
import { formatDiagnostics } from './diagnostics.js';
import { fileLoader, type CliIo } from './io.js';
import { chalkFor } from './style.js';

/** Exit codes of every command. */
export const EXIT = { ok: 0, failed: 1, badInput: 2 } as const;

export interface GlobalOptions {
  checkModel?: boolean;
}

/**
 * Reads and expands the design in `file` for a command, printing its diagnostics to stderr.
 * Returns the design and the texts read (to render later diagnostics), or undefined when it
 * has errors (the command then exits with 2).
 */
export function loadForCommand(file: string, io: CliIo, options: GlobalOptions): { design: Design; sources: Map<string, string> } | undefined {
  const chalk = chalkFor(io, 'stderr');
  let text: string;
  try {
    text = io.readFile(file);
  } catch (e) {
    io.stderr(`${chalk.red.bold('error')}: cannot read ${file}: ${(e as Error).message} [file-unreadable]\n`);
    return undefined;
  }
  const loaded = loadDesign(file, text, { loader: fileLoader(io), checkModel: options.checkModel ?? false });
  report(loaded.diagnostics, loaded.sources, io);
  return loaded.ok && loaded.design ? { design: loaded.design, sources: loaded.sources } : undefined;
}

/** The closing line under errors in a design file. */
const DESIGN_ERRORS = 'the design has errors; fix them and run again';

/**
 * Prints diagnostics to stderr, rendered against the sources, with a closing line when any
 * is an error, saying what to fix (`closing`: the design by default; '' for none, where
 * the error itself says all).
 */
export function report(diagnostics: Diagnostic[], sources: ReadonlyMap<string, string>, io: CliIo, closing = DESIGN_ERRORS): void {
  if (diagnostics.length === 0) return;
  io.stderr(formatDiagnostics(diagnostics, sources, chalkFor(io, 'stderr')) + '\n');
  if (hasErrors(diagnostics) && closing !== '') io.stderr(`${closing}\n`);
}

/**
 * Logic states given as `NET=1` or `NET=0` words (`--hint`, `--expect`), read and checked.
 * A number is the exit code of a usage error (printed).
 */
export function readStates(words: readonly string[], option: string, io: CliIo): StateHint[] | number {
  const states: StateHint[] = [];
  for (const w of words) {
    const m = /^([^=\s]+)=([01])$/.exec(w);
    if (!m) return usageError(io, `${option} takes NET=1 or NET=0, not '${w}'`);
    states.push({ net: m[1]!, high: m[2] === '1' });
  }
  return states;
}

/**
 * Checks `--hint`s against the design: each must name a net of a latch or a larger loop,
 * whose state is what a hint picks. A hint elsewhere (an input, a gate's output, a grid)
 * would only be pinned for the start and released, and while pinned it can set or clear a
 * latch it feeds, so it is refused. Returns the exit code of the usage error, or undefined.
 */
export function checkHints(design: Design, hints: readonly StateHint[], io: CliIo): number | undefined {
  if (hints.length === 0) return undefined;
  const nets = new Set(designNets(design));
  const graph = buildStageGraph(design);
  const looped = new Set(graph.loops.flatMap((l) => l.nets));
  for (const h of hints) {
    if (!nets.has(h.net)) {
      const near = closestName(h.net, [...looped]);
      return usageError(io, `--hint names unknown net '${h.net}'${near ? `; did you mean '${near}'?` : ''} [unknown-net]`);
    }
    if (!looped.has(h.net)) {
      const latches = graph.loops.filter((l) => l.kind === 'latch').map((l) => l.nets.join(' ↔ '));
      const which = latches.length === 0 ? 'the design has no latch' : `its latches: ${latches.slice(0, 4).join(', ')}${latches.length > 4 ? ', …' : ''}`;
      return usageError(io, `--hint names '${h.net}', which is in no latch or loop: a hint picks the state a latch starts in (${which})`);
    }
  }
  return undefined;
}

/** Prints a usage error (a bad option value) to stderr; returns the bad-input exit code. */
export function usageError(io: CliIo, message: string): number {
  io.stderr(`${chalkFor(io, 'stderr').red.bold('error')}: ${message}\n`);
  return EXIT.badInput;
}

/** `--margin` and `--age`, read and checked: the requirement every judging command takes. A number is the exit code of a usage error (printed). */
export function readRequirement(options: { margin?: string; age?: string }, io: CliIo): { margin: number | undefined; scenario: AgeingScenario } | number {
  let margin: number | undefined;
  if (options.margin !== undefined) {
    const m = /^\s*(\d+(?:\.\d+)?)\s*(?:V)?\s*$/.exec(options.margin);
    if (!m) return usageError(io, `--margin takes a voltage such as 1.5 or 1.5V, not '${options.margin}'`);
    margin = Number(m[1]);
  }
  const scenario = findScenario(options.age ?? 'new');
  if (!scenario) return usageError(io, `--age takes one of ${AGEING_SCENARIOS.map((x) => x.name).join(', ')}, not '${options.age}'`);
  return { margin, scenario };
}
