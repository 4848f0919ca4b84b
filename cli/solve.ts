import { designNets, findPart, solveOperatingPoint } from '../lib/index.js';
import { renderSolve, solveToJson } from '../lib/report/solveReport.js';
import type { CliIo } from './io.js';
import { EXIT, loadForCommand, readStates, report, usageError, type GlobalOptions } from './load.js';

export const SOLVE_SUMMARY = 'solve the DC operating point: every node, section and resistor';

export const SOLVE_HELP = `
Solves the whole circuit at nominal values: every net's voltage, every section's
electrode voltages, currents and plate dissipation, every resistor's power. Latches
start from the states given with --hint (each latch without one starts with its first
net low) and are then released, so the state reported is a stable one; a hint that does
not hold means that state does not exist. --close presses a button or closes a switch.
Exit code 1 when the solution does not converge or a hinted state does not hold.`;

export interface SolveCliOptions extends GlobalOptions {
  hint?: string[];
  close?: string[];
  json?: boolean;
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
  const nets = new Set(designNets(design));
  for (const h of hints) {
    if (!nets.has(h.net)) return bad(`--hint names unknown net '${h.net}' [unknown-net]`);
  }
  const op = solveOperatingPoint(design, { hints, close });
  if (!('nodes' in op)) {
    report(op.diagnostics, sources, io);
    return EXIT.badInput;
  }
  if (options.json) io.stdout(JSON.stringify(solveToJson(design, op), null, 2) + '\n');
  else io.stdout(renderSolve(design, op, file));
  const failed = !op.converged || op.hints.some((h) => !h.held) || op.diagnostics.some((d) => d.code === 'state-undecided');
  return failed ? EXIT.failed : EXIT.ok;
}
