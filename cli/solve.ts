import { findPart, reproduceWitness, solveOperatingPoint } from '../lib/index.js';
import { renderSolve, solveToJson } from '../lib/report/solveReport.js';
import { wrap } from '../lib/report/format.js';
import { REPORT_COLUMNS } from '../lib/report/showText.js';
import type { CliIo } from './io.js';
import { EXIT, checkHints, loadForCommand, readStates, report, usageError, type GlobalOptions } from './load.js';
import { readWitness } from './witness.js';

export const SOLVE_SUMMARY = 'solve the DC operating point: every node, section and resistor';

export const SOLVE_HELP = `
Solves the whole circuit at nominal values: every net's voltage, every section's
electrode voltages, currents and plate dissipation, every resistor's power. Latches
start from the states given with --hint (each latch without one starts with its first
net in name order low) and are then released, so the state reported is a stable one; a
hint that does not hold means that state does not exist. --close presses a button or
closes a switch; a latch set and cleared at once is a state of its own, both nets low.
--at re-solves a witness of check: the design at the witness's part values, contacts
and latch states (a witness object, or a whole check --json report with --at-net
naming the net or latch), and says whether the failure it names is there.
Exit code 1 when the solution does not converge, a hinted state does not hold, a latch
sits at its metastable point or has no states, or the witness's failure is there.`;

export interface SolveCliOptions extends GlobalOptions {
  hint?: string[];
  close?: string[];
  json?: boolean;
  at?: string;
  atNet?: string;
}

export function runSolve(file: string, options: SolveCliOptions, io: CliIo): number {
  const bad = (message: string) => usageError(io, message);
  const hints = readStates(options.hint ?? [], '--hint', io);
  if (typeof hints === 'number') return hints;
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const { design, sources } = loaded;
  const close = new Set<string>();
  for (const name of options.close ?? []) {
    const found = findPart(design, name, 'switch');
    if ('diagnostic' in found) return bad(`${found.diagnostic.message}${found.diagnostic.notes.length ? `; ${found.diagnostic.notes.join('; ')}` : ''} [unknown-part]`);
    close.add(name);
  }
  const badHint = checkHints(design, hints, io);
  if (badHint !== undefined) return badHint;
  if (options.at !== undefined) {
    if (hints.length > 0 || close.size > 0) return bad('--at sets the contacts and latch states itself: leave out --hint and --close');
    const read = readWitness(options.at, options.atNet, io);
    if (typeof read === 'number') return read;
    const r = reproduceWitness(design, read.witness);
    if (r.unknown.length > 0) return bad(`the witness names what ${file} does not have: ${r.unknown.join(', ')} [unknown-part]`);
    if (!r.op) return bad(`the design cannot be solved at the witness: ${r.seen}`);
    const line = `At the witness of ${read.of}: ${r.seen}; ${r.reproduced ? 'the failure it names is there' : 'the failure it names is NOT there'}.`;
    if (options.json) io.stdout(JSON.stringify({ ...solveToJson(design, r.op), witness: { of: read.of, reproduced: r.reproduced, seen: r.seen } }, null, 2) + '\n');
    else io.stdout(`${wrap(line, REPORT_COLUMNS).join('\n')}\n\n${renderSolve(design, r.op, file)}`);
    return r.reproduced || !r.op.converged ? EXIT.failed : EXIT.ok;
  }
  const op = solveOperatingPoint(design, { hints, close });
  if (!('nodes' in op)) {
    report(op.diagnostics, sources, io);
    return EXIT.badInput;
  }
  if (options.json) io.stdout(JSON.stringify(solveToJson(design, op), null, 2) + '\n');
  else io.stdout(renderSolve(design, op, file));
  const failed = !op.converged || op.hints.some((h) => !h.held && !h.assumed) || op.diagnostics.some((d) => d.code === 'state-undecided' || d.code === 'latch-no-state');
  return failed ? EXIT.failed : EXIT.ok;
}
