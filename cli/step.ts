import { checkMargins, parseSequence, stepDesign, type SequenceAction } from '../lib/index.js';
import { table, wrap } from '../lib/report/format.js';
import type { CliIo } from './io.js';
import { EXIT, checkHints, loadForCommand, readStates, report, usageError, type GlobalOptions } from './load.js';
import { append } from '../lib/lists.js';
import { safetyCautions } from '../lib/report/safety.js';

export const STEP_SUMMARY = 'step the design through a sequence of inputs: the state after each step';

export const STEP_HELP = `
Presses and releases buttons, opens and closes switches and sets drives as the
sequence says, solving the DC state after each change from the state before, so
latches keep theirs; prints the logic state of the watched nets after each step,
whether the sequence's expectations held, and the smallest worst-case noise margin
of the watched nets in the states they are in. The sequence is a file or the text
itself: press NAME, release NAME, close NAME, open NAME, pulse NAME (press and
release), set NAME = 12 V, expect NET=1 OTHER=0; one a line or between ';'.
Exit code 0 when every expectation holds, 1 when one does not, 2 for bad input.`;

export interface StepCliOptions extends GlobalOptions {
  sequence?: string;
  nets?: string;
  hint?: string[];
  json?: boolean;
}

/**
 * A sequence given to an option (`--sequence`, `pulse --after`): a file when one of that
 * name can be read, otherwise the text itself. Returns its actions and the sources to
 * render later diagnostics against, or the exit code of a problem (printed at line:col).
 */
export function readSequence(given: string, option: string, designSources: ReadonlyMap<string, string>, io: CliIo): { actions: SequenceAction[]; sources: Map<string, string> } | number {
  let source = `(${option})`;
  let text = given;
  try {
    text = io.readFile(given);
    source = given;
  } catch {
    text = given;
  }
  const sources = new Map([...designSources, [source, text]]);
  const parsed = parseSequence(source, text);
  // A single word with a dot or a slash that could not be read was meant as a file name.
  if (source === `(${option})` && parsed.diagnostics.length > 0 && /^[^\s;]*[./][^\s;]*$/.test(text.trim())) {
    return usageError(io, `cannot read the sequence file '${text.trim()}' (nor is it a sequence: actions are press, release, close, open, pulse, set, expect)`);
  }
  if (parsed.diagnostics.length > 0) {
    report(parsed.diagnostics, sources, io, `the sequence (${option}) has errors; fix it and run again`);
    return EXIT.badInput;
  }
  return { actions: parsed.value, sources };
}

/** Digits of the state on one line: more watched nets go on below, a line each 16. */
const STATE_DIGITS = 16;

export function runStep(file: string, options: StepCliOptions, io: CliIo): number {
  if (!options.sequence) return usageError(io, 'give the sequence: --sequence FILE or --sequence "press START; expect on=1"');
  const hints = readStates(options.hint ?? [], '--hint', io);
  if (typeof hints === 'number') return hints;
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const badHint = checkHints(loaded.design, hints, io);
  if (badHint !== undefined) return badHint;
  const sequence = readSequence(options.sequence, '--sequence', loaded.sources, io);
  if (typeof sequence === 'number') return sequence;
  const { actions, sources } = sequence;
  // The step judges levels against the worst-case thresholds alone: no corners needed.
  const check = checkMargins(loaded.design, { refine: false });
  const nets = options.nets?.split(',').map((n) => n.trim()).filter(Boolean);
  const r = stepDesign(loaded.design, actions, { hints, nets, check: 'verdict' in check ? check : undefined });
  if (!('rows' in r)) {
    report(r.diagnostics, sources, io, 'the sequence or --nets names what the design lacks; fix it and run again');
    return EXIT.badInput;
  }
  // The levels the sequence sets count for the safety cautions as the design's own do.
  const cautions = safetyCautions(loaded.design, actions.flatMap((a) => (a.kind === 'set' ? [{ name: a.part, volts: a.volts }] : [])));
  if (options.json) {
    io.stdout(JSON.stringify({ schema: 'tubemargin.step/1', nets: r.nets, ok: r.ok, steps: r.rows, cautions }, null, 2) + '\n');
    return r.ok ? EXIT.ok : EXIT.failed;
  }
  const out = [`${loaded.design.title || '(untitled design)'} — ${file}`, 'Watched nets, in the order of the state column:'];
  r.nets.forEach((n, i) => out.push(`  ${String(i + 1).padStart(2)}. ${n}`));
  out.push('');
  // A state longer than its column goes on in lines of its own below the row, never cut.
  const chunks = (row: (typeof r.rows)[number]) => (row.converged ? (row.states.map((x) => (x.high ? '1' : '0')).join('').match(new RegExp(`.{1,${STATE_DIGITS}}`, 'g')) ?? ['']) : ['no solution']);
  const lines = table(
    ['  step', 'action', 'state', 'margin', 'expected'],
    r.rows.map((row, i) => [
      `  ${i}`,
      row.action,
      chunks(row)[0]!,
      row.margin ? `${row.margin.volts.toFixed(2)} ${row.margin.net}` : '',
      row.expected.length === 0 ? '' : row.expected.every((e) => e.ok) ? 'held' : row.expected.filter((e) => !e.ok).map((e) => `NOT ${e.net}=${e.high ? 1 : 0}`),
    ]),
    [6, 28, STATE_DIGITS, 18],
  );
  const column = lines[0]!.indexOf('state');
  out.push(lines[0]!);
  r.rows.forEach((row, i) => out.push(lines[i + 1]!, ...chunks(row).slice(1).map((c) => ' '.repeat(column) + c)));
  out.push('  (state: 1 high, 0 low, a digit a watched net; margin: the smallest worst-case');
  out.push('  noise margin of the watched nets in their present states, volts, and whose)');
  for (const [i, row] of r.rows.entries()) if (row.why !== undefined) append(out, wrap(`Step ${i} has no solution: ${row.why}.`, 80));
  if (cautions.length > 0) out.push('', ...cautions.flatMap((c) => wrap(c, 80)));
  io.stdout(out.join('\n') + '\n');
  return r.ok ? EXIT.ok : EXIT.failed;
}
