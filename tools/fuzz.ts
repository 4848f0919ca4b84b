/**
 * The fuzz harness of odd but valid designs (issue 14): runs designs from
 * `fuzzDesigns.ts` through the library functions the commands call and through the
 * commands themselves (in-process, and as real processes to catch true hangs), and holds
 * every run to the invariants:
 *
 * - exit code 0, 1 or 2 only (3 is an internal error), and no "internal error" text;
 * - no NaN or Infinity in any output, text, JSON or HTML;
 * - in JSON, no null without a sibling `<key>Why` that says why (`WHY_SUFFIX`);
 * - after a DC solve every net lies within the span of the fixed voltages (ground, rails
 *   and drives at their tolerance ends) widened by the negative grid-current onsets it can
 *   sit behind and `SPAN_SLACK_VOLTS` (`fixedSpan`): in a circuit of resistors, tubes and
 *   diodes no node can leave it but by the grid-current onset;
 * - every run ends within `HANG_MS`.
 *
 * `npm run fuzz` (this file's `main`) runs a large seeded batch and prints the count, the
 * time and the results per category; `--shrink DIR` writes one shrunk reproducer per kind
 * of failure. The test in `test/fuzz/` runs a smaller batch on every `npm test`.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { runCli } from '../cli/main.js';
import { memoryIo } from '../cli/io.js';
import {
  checkMargins,
  CORNER_WORK,
  loadDesign,
  parseSequence,
  parseWaveform,
  pulseDesign,
  Sampler,
  samplingThresholds,
  solveOperatingPoint,
  stepDesign,
  summarizeSamples,
  sweepRails,
  type Design,
  type Waveform,
} from '../lib/index.js';
import { checkToJson, renderCheck } from '../lib/report/checkReport.js';
import { renderSolve, solveToJson } from '../lib/report/solveReport.js';
import { renderSweep, sweepToJson } from '../lib/report/sweepReport.js';
import { sampleDesigns, type FuzzDesign, type FuzzDesignOptions } from './fuzzDesigns.js';

/** A null in JSON output is explained by a sibling key of its name and this suffix, holding a non-empty string. */
export const WHY_SUFFIX = 'Why';

/** How far a DC node may lie outside the span of the fixed voltages besides the grid onsets (`fixedSpan`): rounding, with room. */
export const SPAN_SLACK_VOLTS = 0.5;

/**
 * A run longer than this is a hang, as issue 14 counts one (a minute). A few runs are
 * slow without hanging — a 10 µs simulation of a design with a teraohm load and a
 * one-farad capacitor takes about 8 s, its time constants twenty decades apart — and the
 * report prints the slowest run of every command so that they stay in view.
 */
export const HANG_MS = 60_000;

/** The file name designs are given under. */
export const DESIGN_FILE = 'f.tube';

export type FailureKind = 'internal-error' | 'exit-code' | 'not-finite' | 'null-unexplained' | 'voltage-out-of-span' | 'hang';
export const FAILURE_KINDS: readonly FailureKind[] = ['internal-error', 'exit-code', 'not-finite', 'null-unexplained', 'voltage-out-of-span', 'hang'];

export interface Failure {
  kind: FailureKind;
  /** What exactly: the JSON path, the net and its voltage, the exception. */
  detail: string;
  /** The same for failures of one cause (paths without indices and names): for counting distinct ones. */
  signature: string;
}

/** How a run ended when it broke no invariant: an answer (exit 0 or 1) or a diagnosis of the input (exit 2). */
export type Outcome = 'answered' | 'rejected' | 'failure';

export interface RunResult {
  /** The command line, or `lib:OPERATION` for a library run. */
  command: string;
  code: number | undefined;
  ms: number;
  outcome: Outcome;
  failures: Failure[];
}

// ---- the invariants, as pure checks -----------------------------------------------------

/** Marks a non-finite number in a value before it is written as JSON, which would turn it into null. */
const NOT_FINITE_MARK = '\u0000not-finite';

const NOT_FINITE_WORD = /(?<![\w.])-?(?:NaN|Infinity)(?![\w])/g;

/** Each NaN or Infinity written in `text`, with a little context. */
export function notFiniteInText(text: string, what: string): Failure[] {
  const out: Failure[] = [];
  for (const m of text.matchAll(NOT_FINITE_WORD)) {
    const at = m.index;
    const from = Math.max(text.lastIndexOf('\n', at) + 1, at - 80);
    const to = text.indexOf('\n', at) < 0 ? Math.min(text.length, at + 80) : Math.min(text.indexOf('\n', at), at + 80);
    out.push({ kind: 'not-finite', detail: `${what}: …${text.slice(from, to).trim()}…`, signature: `${what}: ${m[0]}` });
    if (out.length >= 3) break;
  }
  return out;
}

/** Objects of reports keyed by net, part or definition names: their keys are folded in signatures. */
const KEYED_BY_NAME = new Set(['nodes', 'tubes', 'resistors', 'traces', 'volts', 'definitions']);

/** A JSON path with its array indices and names folded, to count failures of one cause once. */
function pathSignature(path: string): string {
  return path.replace(/\[\d+\]/g, '[]').replace(/\["[^"]*"\]/g, '[*]');
}

/** Names and numbers of a message folded, to count failures of one cause once. */
export function messageSignature(message: string): string {
  return message
    .replace(/'[^']*'/g, "'…'")
    .replace(/\b[A-Za-z_][\w]*\d[\w.\/\[\]]*/g, '…')
    .replace(/-?\d+(\.\d+)?(e[+-]?\d+)?/g, '#')
    .slice(0, 120);
}

/**
 * Every null (and every non-finite number, which JSON would write as null) in a value
 * about to be written as JSON, unless a sibling `<key>Why` holds a non-empty string.
 * Nulls inside arrays have no sibling to explain them and are always reported.
 */
export function unexplainedNulls(value: unknown, what: string): Failure[] {
  const out: Failure[] = [];
  const walk = (v: unknown, path: string, parent: Record<string, unknown> | undefined, key: string | undefined) => {
    if (typeof v === 'number' && !Number.isFinite(v)) {
      out.push({ kind: 'not-finite', detail: `${what} ${path} = ${v}`, signature: `${what} ${pathSignature(path)} = ${v}` });
      return;
    }
    if (v === null || v === undefined) {
      if (v === undefined && parent !== undefined) return; // left out of the JSON
      const why = parent && key !== undefined ? parent[key + WHY_SUFFIX] : undefined;
      if (typeof why === 'string' && why.trim() !== '') return;
      out.push({ kind: 'null-unexplained', detail: `${what} ${path} is null${parent ? ` without ${key}${WHY_SUFFIX}` : ' in an array'}`, signature: `${what} ${pathSignature(path)}` });
      return;
    }
    if (Array.isArray(v)) v.forEach((x, i) => walk(x === undefined ? null : x, `${path}[${i}]`, undefined, undefined));
    else if (ArrayBuffer.isView(v)) {
      const xs = v as unknown as ArrayLike<number>;
      for (let i = 0; i < xs.length; i++) walk(xs[i], `${path}[${i}]`, undefined, undefined);
    } else if (v instanceof Map) for (const [k, x] of v) walk(x, `${path}.${String(k)}`, undefined, undefined);
    else if (typeof v === 'object' && NOT_FINITE_MARK in v) {
      const x = (v as Record<string, string>)[NOT_FINITE_MARK]!;
      out.push({ kind: 'not-finite', detail: `${what} ${path} = ${x}`, signature: `${what} ${pathSignature(path)} = ${x}` });
    } else if (typeof v === 'object') {
      const named = KEYED_BY_NAME.has(key ?? '');
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) walk(x, named ? `${path}["${k}"]` : `${path}.${k}`, v as Record<string, unknown>, k);
    }
  };
  walk(value, '$', undefined, undefined);
  return out;
}

/**
 * The span of the fixed voltages of a design (ground, every rail and every drive, at their
 * tolerance ends) and how far a DC node may lie beyond it: `SPAN_SLACK_VOLTS` for
 * rounding, plus, for sections with a negative grid-current onset (the one element that
 * can push a grid below its cathode), that onset once for every section a node can sit
 * behind — a grid that is another section's cathode stacks them.
 */
export function fixedSpan(design: Design): [low: number, high: number, slack: number] {
  const ends = [0];
  for (const r of design.rails) ends.push(r.volts * (1 - r.tol), r.volts * (1 + r.tol));
  for (const p of design.parts) if (p.type === 'drive') ends.push(p.volts * (1 - p.tol), p.volts * (1 + p.tol));
  const tubes = design.parts.filter((p) => p.type === 'tube');
  const onset = Math.max(0, ...design.models.map((m) => -m.vgamma));
  const cathodes = new Set(tubes.map((t) => t.cathode));
  const chain = 1 + tubes.filter((t) => cathodes.has(t.grid)).length;
  return [Math.min(...ends), Math.max(...ends), SPAN_SLACK_VOLTS + onset * chain];
}

/** Nets of a DC solution outside the fixed span widened by its slack; `at` says which solution (a step of a sequence). */
export function outsideSpan(nodes: Iterable<[string, number]>, span: [number, number, number], what: string, at = ''): Failure[] {
  const [low, high] = [span[0] - span[2], span[1] + span[2]];
  const out: Failure[] = [];
  for (const [net, v] of nodes) {
    if (v >= low && v <= high) continue;
    if (!Number.isFinite(v)) continue; // reported as not finite
    out.push({
      kind: 'voltage-out-of-span',
      detail: `${what}${at}: net ${net} at ${v.toPrecision(5)} V, outside ${span[0].toPrecision(4)}…${span[1].toPrecision(4)} V ± ${span[2].toPrecision(3)} V`,
      signature: `${what}: ${/\.(g\d+|sg)$/.test(net) ? 'grid node' : 'net'} ${v < low ? 'below' : 'above'} the span`,
    });
  }
  return out.slice(0, 5);
}

/** A run's command without its values: `lib:check`, `check --samples --workers --json`; runs are counted and timed by it. */
export function commandKey(command: string): string {
  if (command.startsWith('lib:')) return command;
  const words = command.split(' ');
  return [words[1], ...words.filter((w) => w.startsWith('--'))].join(' ');
}

function classify(command: string, code: number | undefined, ms: number, failures: Failure[]): RunResult {
  if (ms > HANG_MS) failures.push({ kind: 'hang', detail: `${command} took ${(ms / 1000).toFixed(1)} s`, signature: `${commandKey(command)} over ${HANG_MS / 1000} s` });
  const outcome: Outcome = failures.length > 0 ? 'failure' : code === 2 ? 'rejected' : 'answered';
  return { command, code, ms, outcome, failures };
}

// ---- runs through the library ---------------------------------------------------------

/** The library runs: each the functions one command calls, then its text and JSON. */
export type LibraryOperation = 'solve' | 'check' | 'samples' | 'sweep' | 'step' | 'pulse';
export const LIBRARY_OPERATIONS: readonly LibraryOperation[] = ['solve', 'check', 'samples', 'sweep', 'step', 'pulse'];

/** Whether a design has what an operation needs: a rail to sweep, a button to press, a drive to pulse. */
export function applies(fd: Pick<FuzzDesign, 'rails' | 'buttons' | 'drives'>, op: LibraryOperation): boolean {
  return op === 'sweep' ? fd.rails.length > 0 : op === 'step' ? fd.buttons.length > 0 : op === 'pulse' ? fd.drives.length > 0 : true;
}

/** Loads design text as the commands do; undefined when it has errors. */
export function loadText(text: string): Design | undefined {
  const r = loadDesign(DESIGN_FILE, text);
  return r.ok ? r.design : undefined;
}

/** `sweep --rail` for a rail of these volts: ±20 % in 4 steps (a small band where the rail is near 0 V). */
export function sweepAxis(rail: { name: string; volts: number }): { rail: string; from: number; to: number; step: number } {
  const v = rail.volts;
  const [from, to] = Math.abs(v) < 0.05 ? [v - 1, v + 1] : [Math.min(0.8 * v, 1.2 * v), Math.max(0.8 * v, 1.2 * v)];
  const f = (x: number) => Number(x.toFixed(3));
  return { rail: rail.name, from: f(from), to: f(to), step: f((f(to) - f(from)) / 4) || 0.001 };
}

/** A waveform for `pulse --input`: one pulse from the drive's level to another and back, inside a run of `PULSE_RUN`. */
export function pulseWaveform(volts: number): string {
  const active = Math.abs(volts) < 5 ? volts + 20 : volts / 4;
  return `pulse(${Number(volts.toPrecision(4))}V, ${Number(active.toPrecision(4))}V, at=2us, width=4us)`;
}
export const PULSE_RUN = '10us';

/** The sequence `step` is given for a design with a button. */
export function buttonSequence(button: string): string {
  return `press ${button}; release ${button}`;
}

/** The JSON invariants of a report value as the library built it: where a number is not finite, and every unexplained null. */
function jsonChecks(value: unknown, what: string): Failure[] {
  const marked = JSON.parse(JSON.stringify(value, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? { [NOT_FINITE_MARK]: String(v) } : v)));
  return unexplainedNulls(marked, what);
}

/**
 * One library run of `op` on a design: what the command of that name computes, written
 * as its text and JSON reports, held to the invariants. A thrown exception is an internal
 * error.
 */
export function runLibrary(fd: Pick<FuzzDesign, 'text' | 'rails' | 'buttons' | 'drives'>, op: LibraryOperation): RunResult {
  const command = `lib:${op}`;
  const start = performance.now();
  const failures: Failure[] = [];
  let rejected = false;
  try {
    const loaded = loadDesign(DESIGN_FILE, fd.text);
    const design = loaded.design;
    if (loaded.diagnostics.some((d) => d.code === 'model-inconsistent')) failures.push({ kind: 'internal-error', detail: 'model-inconsistent on load', signature: 'load: model-inconsistent' });
    if (!loaded.ok || !design) rejected = true;
    else rejected = runOperation(design, fd, op, failures);
  } catch (e) {
    const err = e as Error;
    failures.push({ kind: 'internal-error', detail: `${command} threw ${err.stack ?? String(e)}`.slice(0, 600), signature: `${command} threw ${messageSignature(err.message ?? String(e))}` });
  }
  return classify(command, rejected ? 2 : 0, performance.now() - start, failures);
}

/** Runs one operation on a loaded design; true when the design was turned away with a diagnostic. */
function runOperation(design: Design, fd: Pick<FuzzDesign, 'rails' | 'buttons' | 'drives'>, op: LibraryOperation, failures: Failure[]): boolean {
  const what = `lib:${op}`;
  const inconsistent = (diagnostics: readonly { code: string; message: string }[]) => {
    for (const d of diagnostics) if (d.code === 'model-inconsistent') failures.push({ kind: 'internal-error', detail: `${what}: ${d.message}`, signature: `${what}: model-inconsistent` });
  };
  switch (op) {
    case 'solve': {
      const op = solveOperatingPoint(design);
      if (!('nodes' in op)) {
        inconsistent(op.diagnostics);
        return true;
      }
      failures.push(...jsonChecks(solveToJson(design, op), 'solve --json'));
      failures.push(...notFiniteInText(renderSolve(design, op, DESIGN_FILE), 'solve'));
      // A solve reported as not converged may leave the span (the issue asks it to name the nets that do).
      if (op.converged) failures.push(...outsideSpan(op.nodes, fixedSpan(design), 'solve'));
      return false;
    }
    case 'check':
    case 'samples': {
      // The Monte Carlo run needs the thresholds alone; the refinement of verdicts is fuzzed by
      // 'check', on a tenth of its budget: every path of it runs, and a batch stays short.
      const r = checkMargins(design, { ratings: true, refine: op === 'check', cornerWork: CORNER_WORK / 10 });
      if (!('verdict' in r)) {
        inconsistent(r.diagnostics);
        return true;
      }
      let mc;
      if (op === 'samples') {
        const setup = { seed: 1, distribution: 'uniform' as const, scenario: r.scenario.name, requiredMargin: r.requiredMargin, thresholds: samplingThresholds(r) };
        const sampler = new Sampler(design, setup);
        mc = summarizeSamples(setup, sampler.parameters, Array.from({ length: 50 }, (_, k) => sampler.run(k)));
      }
      failures.push(...jsonChecks(checkToJson(design, r, mc), `${op === 'samples' ? 'check --samples' : 'check'} --json`));
      failures.push(...notFiniteInText(renderCheck(design, r, DESIGN_FILE, mc), op === 'samples' ? 'check --samples' : 'check'));
      return false;
    }
    case 'sweep': {
      const rail = fd.rails[0];
      if (!rail) return true;
      const r = sweepRails(design, { axes: [sweepAxis(rail)] });
      if (!('grid' in r)) {
        inconsistent(r.diagnostics);
        return true;
      }
      failures.push(...jsonChecks(sweepToJson(design, r), 'sweep --json'));
      failures.push(...notFiniteInText(renderSweep(design, r, DESIGN_FILE), 'sweep'));
      return false;
    }
    case 'step': {
      const button = fd.buttons[0];
      if (!button) return true;
      const check = checkMargins(design);
      const actions = parseSequence('(--sequence)', buttonSequence(button)).value;
      const r = stepDesign(design, actions, { check: 'verdict' in check ? check : undefined });
      if (!('rows' in r)) {
        inconsistent(r.diagnostics);
        return true;
      }
      failures.push(...jsonChecks({ schema: 'tubemargin.step/1', nets: r.nets, ok: r.ok, steps: r.rows }, 'step --json'));
      for (const [i, row] of r.rows.entries()) if (row.converged) failures.push(...outsideSpan(row.states.map((s) => [s.net, s.volts] as [string, number]), fixedSpan(design), 'step --json', ` (step ${i})`));
      return false;
    }
    case 'pulse': {
      const drive = fd.drives[0];
      if (!drive) return true;
      const w = parseWaveform(pulseWaveform(drive.volts));
      if ('error' in w) throw new Error(`the harness wrote a bad waveform: ${w.error}`);
      const r = pulseDesign(design, { inputs: new Map<string, Waveform>([[drive.name, w.value]]), stop: 10e-6 });
      if (!('run' in r)) {
        inconsistent(r.diagnostics);
        return true;
      }
      const traces = Object.fromEntries(r.nets.map((n) => [n, r.run.volts(n)]));
      failures.push(...jsonChecks({ times: r.run.times, pulses: r.pulses, stages: r.stages, traces }, 'pulse --json'));
      return false;
    }
  }
}

// ---- runs of the commands -------------------------------------------------------------

export interface CommandOutput {
  code: number;
  out: string;
  err: string;
  /** Files the command wrote, by name. */
  written: Record<string, string>;
}

/** Runs the command line with these files; the in-process runner, the test's `runCommand` or a real process. */
export type Runner = (args: string[], files: Record<string, string>) => Promise<CommandOutput>;

/** `runCli` in this process, over in-memory files. */
export const inProcess: Runner = async (args, files) => {
  const { io, captured } = memoryIo((p) => {
    const text = files[p];
    if (text === undefined) throw new Error('no such file');
    return text;
  });
  const code = await runCli(args, io);
  return { code, ...captured };
};

/** The repository's root: the folder above this file (or above dist/tools/) that holds package.json. */
function repositoryRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  while (!existsSync(join(dir, 'package.json')) && dirname(dir) !== dir) dir = dirname(dir);
  return dir;
}

/** `node bin/tubemargin.js` as a real process in a scratch folder, killed after `timeoutMs` (a hang: code −1). */
export function subprocess(timeoutMs: number): Runner {
  const bin = join(repositoryRoot(), 'bin', 'tubemargin.js');
  return async (args, files) => {
    const dir = mkdtempSync(join(tmpdir(), 'tubemargin-fuzz-'));
    try {
      for (const [name, text] of Object.entries(files)) writeFileSync(join(dir, name), text);
      const r = spawnSync(process.execPath, [bin, ...args], { cwd: dir, encoding: 'utf8', timeout: timeoutMs, killSignal: 'SIGKILL', maxBuffer: 256 * 1024 * 1024 });
      const written: Record<string, string> = {};
      for (const a of args) if (/\.(html|csv)$/.test(a) && existsSync(join(dir, a))) written[a] = readFileSync(join(dir, a), 'utf8');
      const timedOut = (r.error as NodeJS.ErrnoException | undefined)?.code === 'ETIMEDOUT' || r.signal === 'SIGKILL';
      return { code: timedOut ? -1 : (r.status ?? -1), out: r.stdout ?? '', err: (r.stderr ?? '') + (timedOut ? `\n(killed after ${timeoutMs} ms)` : ''), written };
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  };
}

/** The command lines run on a design: every command, as the issue lists them, where the design has what it needs. */
export function commandsFor(fd: Pick<FuzzDesign, 'rails' | 'buttons' | 'drives'>): string[][] {
  const f = DESIGN_FILE;
  const lines = [['solve', f], ['solve', f, '--json'], ['check', f], ['check', f, '--json'], ['check', f, '--samples', '50', '--workers', '1', '--json'], ['report', f, '-o', 'x.html']];
  const rail = fd.rails[0];
  if (rail) {
    const a = sweepAxis(rail);
    lines.push(['sweep', f, '--rail', `${a.rail}=${a.from}:${a.to}:${a.step}`], ['sweep', f, '--rail', `${a.rail}=${a.from}:${a.to}:${a.step}`, '--json']);
  }
  const button = fd.buttons[0];
  if (button) lines.push(['step', f, '--sequence', buttonSequence(button)], ['step', f, '--sequence', buttonSequence(button), '--json'], ['solve', f, '--close', button, '--json']);
  const drive = fd.drives[0];
  if (drive) lines.push(['pulse', f, '--for', PULSE_RUN, '--input', `${drive.name}=${pulseWaveform(drive.volts)}`, '--json']);
  return lines;
}

/** Quotes a command line for a person to paste. */
export function shellLine(args: string[]): string {
  return ['tubemargin', ...args].map((a) => (/^[\w./=:-]+$/.test(a) ? a : `'${a.replace(/'/g, `'\\''`)}'`)).join(' ');
}

/** Runs one command line on design text through `runner`, held to the invariants. */
export async function runCommandLine(text: string, args: string[], runner: Runner): Promise<RunResult> {
  const command = shellLine(args);
  const name = args[0]!;
  const start = performance.now();
  const failures: Failure[] = [];
  let r: CommandOutput;
  try {
    r = await runner(args, { [DESIGN_FILE]: text });
  } catch (e) {
    failures.push({ kind: 'internal-error', detail: `${command} threw ${(e as Error).stack ?? String(e)}`.slice(0, 600), signature: `${name} threw` });
    return classify(command, undefined, performance.now() - start, failures);
  }
  const ms = performance.now() - start;
  if (r.code === -1) failures.push({ kind: 'hang', detail: `${command}: ${r.err.trim().split('\n').pop()}`, signature: `${name} killed` });
  else if (![0, 1, 2].includes(r.code)) failures.push({ kind: 'exit-code', detail: `${command} exited ${r.code}`, signature: `${name} exit ${r.code}` });
  const said = r.out + r.err;
  const internal = /internal error/i.exec(said);
  if (internal) {
    const line = said.slice(internal.index).split('\n').slice(0, 2).join(' ').slice(0, 300);
    failures.push({ kind: 'internal-error', detail: `${command}: ${line}`, signature: `${name}: ${messageSignature(line)}` });
  }
  failures.push(...notFiniteInText(r.out, name), ...notFiniteInText(r.err, `${name} (stderr)`));
  for (const [file, content] of Object.entries(r.written)) failures.push(...notFiniteInText(content, `${name} → ${file}`));
  if (args.includes('--json') && r.code !== 2 && r.out.trim() !== '') {
    let json: unknown;
    try {
      json = JSON.parse(r.out);
    } catch {
      failures.push({ kind: 'internal-error', detail: `${command}: stdout is not JSON`, signature: `${name}: stdout is not JSON` });
    }
    if (json !== undefined) {
      const what = `${args.filter((a) => a.startsWith('--') && a !== '--workers').join(' ')}`.trim();
      failures.push(...unexplainedNulls(json, `${name} ${what}`));
      if (name === 'step') {
        // Every step that solved is a DC state: it keeps the span as a solve does.
        const design = loadText(text);
        const steps = (json as { steps?: { converged: boolean; states: { net: string; volts: number }[] }[] }).steps ?? [];
        if (design) for (const [i, s] of steps.entries()) if (s.converged) failures.push(...outsideSpan(s.states.map((x) => [x.net, x.volts] as [string, number]), fixedSpan(design), `${name} ${what}`, ` (step ${i})`));
      }
      if (name === 'solve') {
        const design = loadText(text);
        const { nodes, converged } = json as { nodes?: Record<string, number>; converged?: boolean };
        if (design && nodes && converged !== false) failures.push(...outsideSpan(Object.entries(nodes), fixedSpan(design), `${name} ${what}`));
      }
    }
  }
  return classify(command, r.code, ms, failures);
}

// ---- shrinking a failure to a small reproducer ------------------------------------------------

/**
 * Removes lines of the design, and items of stages and fields of types, one at a time
 * while `fails` still holds, until nothing more can go (greedy, from the end). Blocks
 * spanning several lines go or stay whole.
 */
export async function shrinkText(text: string, fails: (text: string) => Promise<boolean>): Promise<string> {
  let lines = text.split('\n').filter((l) => l.trim() !== '');
  const join = (ls: string[]) => ls.join('\n') + '\n';
  let changed = true;
  while (changed) {
    changed = false;
    // Whole lines, or whole blocks.
    for (let i = lines.length - 1; i >= 0; i--) {
      let end = i + 1;
      if (/^block /.test(lines[i]!)) while (end < lines.length && lines[end - 1] !== '}') end++;
      if (lines[i] === '}' || /^\s/.test(lines[i]!)) continue;
      const candidate = [...lines.slice(0, i), ...lines.slice(end)];
      if (candidate.length > 0 && (await fails(join(candidate)))) {
        lines = candidate;
        changed = true;
      }
    }
    // Items inside { … } (stage items, type fields, defaults) and optional tails.
    for (let i = lines.length - 1; i >= 0; i--) {
      const m = /^(.*?\{ )(.*)( \}.*)$/.exec(lines[i]!);
      if (!m) continue;
      const sep = m[1]!.startsWith('stage') || m[1]!.trimStart().startsWith('stage') ? '; ' : ', ';
      let items = m[2]!.split(sep);
      for (let k = items.length - 1; k >= 0; k--) {
        const variants = [items.filter((_, j) => j !== k)];
        // Drop optional tails of an item: tolerances, speed-ups, pull-downs.
        for (const tail of [/ tol [\d.e+-]+ %/, / speedup [\d.e+-]+/, / pulldown .*$/]) if (tail.test(items[k]!)) variants.push(items.map((x, j) => (j === k ? x.replace(tail, '') : x)));
        for (const v of variants) {
          const line = v.length === 0 ? m[1]!.replace(/\{ $/, '').trimEnd() + m[3]!.replace(/^ \}/, '') : m[1]! + v.join(sep) + m[3]!;
          const candidate = lines.map((l, j) => (j === i ? line : l));
          if (await fails(join(candidate))) {
            lines = candidate;
            items = v;
            changed = true;
            break;
          }
        }
      }
    }
  }
  return join(lines);
}

// ---- the large run: npm run fuzz ----------------------------------------------------------

export interface Tally {
  runs: number;
  ms: number;
  byOutcome: Record<Outcome, number>;
  byCommand: Map<string, { runs: number; slowestMs: number; outcomes: Record<Outcome, number> }>;
  /** Distinct failures by signature: how many, and the first example. */
  failures: Map<string, { kind: FailureKind; count: number; example: Failure; command: string; text: string; args: string[] | undefined; op: LibraryOperation | undefined; where: string }>;
}

export function newTally(): Tally {
  return { runs: 0, ms: 0, byOutcome: { answered: 0, rejected: 0, failure: 0 }, byCommand: new Map(), failures: new Map() };
}

/** Adds a run to the tally, keeping the first design of each distinct failure. */
export function record(t: Tally, r: RunResult, text: string, source: { args?: string[]; op?: LibraryOperation; where?: string }): void {
  t.runs++;
  t.ms += r.ms;
  t.byOutcome[r.outcome]++;
  const key = commandKey(r.command);
  const c = t.byCommand.get(key) ?? { runs: 0, slowestMs: 0, outcomes: { answered: 0, rejected: 0, failure: 0 } };
  c.runs++;
  c.slowestMs = Math.max(c.slowestMs, r.ms);
  c.outcomes[r.outcome]++;
  t.byCommand.set(key, c);
  for (const f of r.failures) {
    const sig = `${f.kind}: ${f.signature}`;
    const seen = t.failures.get(sig);
    if (seen) seen.count++;
    else t.failures.set(sig, { kind: f.kind, count: 1, example: f, command: r.command, text, args: source.args, op: source.op, where: source.where ?? '' });
  }
}

/** Each distinct failure of a tally with its count and first example, most frequent first: empty when every run kept the invariants. */
export function failureLines(t: Tally): string[] {
  return [...t.failures].sort((a, b) => b[1].count - a[1].count).map(([sig, f]) => `${f.count}× ${sig} — e.g. ${f.example.detail.split('\n')[0]!.slice(0, 240)}`);
}

/** The tally as text: count, time, outcomes, per command, and each distinct failure with its count. */
export function renderTally(t: Tally, wallMs: number): string {
  const out = [`${t.runs.toLocaleString('en')} runs in ${(wallMs / 1000).toFixed(1)} s: ${t.byOutcome.answered} answered (exit 0/1), ${t.byOutcome.rejected} diagnosed (exit 2), ${t.byOutcome.failure} broke an invariant`];
  out.push('', 'Per command (runs, answered/diagnosed/failures, slowest):');
  for (const [k, c] of [...t.byCommand].sort((a, b) => a[0].localeCompare(b[0]))) out.push(`  ${k.padEnd(44)} ${String(c.runs).padStart(7)}  ${c.outcomes.answered}/${c.outcomes.rejected}/${c.outcomes.failure}  ${(c.slowestMs / 1000).toFixed(2)} s`);
  const kinds = new Map<FailureKind, number>();
  for (const f of t.failures.values()) kinds.set(f.kind, (kinds.get(f.kind) ?? 0) + f.count);
  out.push('', 'Failures by kind (invariant: count of breaches):');
  for (const k of FAILURE_KINDS) out.push(`  ${k.padEnd(22)} ${kinds.get(k) ?? 0}`);
  if (t.failures.size > 0) {
    out.push('', `Distinct failures (${t.failures.size}):`);
    for (const [sig, f] of [...t.failures].sort((a, b) => b[1].count - a[1].count)) {
      out.push(`  ${String(f.count).padStart(6)}× ${sig}`, `          e.g. ${f.example.detail.split('\n')[0]!.slice(0, 200)}`);
      if (f.where) out.push(`          first at ${f.where}`);
    }
  }
  return out.join('\n');
}

interface FuzzArguments {
  runs: number;
  seed: number;
  processes: number;
  shrink: string | undefined;
}

function readArguments(argv: string[]): FuzzArguments {
  const a: FuzzArguments = { runs: 100_000, seed: 20_260_14, processes: 300, shrink: undefined };
  for (let i = 0; i < argv.length; i++) {
    const [k, v] = [argv[i], argv[i + 1]];
    if (k === '--runs') a.runs = Number(v);
    else if (k === '--seed') a.seed = Number(v);
    else if (k === '--processes') a.processes = Number(v);
    else if (k === '--shrink') a.shrink = v;
    else throw new Error(`unknown option ${k}: --runs N, --seed S, --processes N, --shrink DIR`);
    i++;
  }
  return a;
}

/**
 * The mix of a batch: most designs tiny and solved once through the library; some small
 * ones through every library operation; some through every command in-process; a few
 * hundred command lines as real processes.
 */
export const BATCH = {
  tiny: { maxMotifs: 1, longArrayChance: 0 } satisfies FuzzDesignOptions,
  small: { maxMotifs: 4, longArrayChance: 0.01, longArray: 1000 } satisfies FuzzDesignOptions,
};

async function main(): Promise<void> {
  const a = readArguments(process.argv.slice(2));
  const tally = newTally();
  const started = performance.now();
  const told = new Set<string>();
  const progress = (what: string) => {
    process.stderr.write(`  ${what}: ${tally.runs.toLocaleString('en')} runs, ${((performance.now() - started) / 1000).toFixed(0)} s, ${tally.failures.size} distinct failures\n`);
    // New kinds of failure as they are found, so a long run can be read while it goes.
    for (const [sig, f] of tally.failures) if (!told.has(sig)) process.stderr.write(`    new: ${sig}\n      e.g. ${f.example.detail.split('\n')[0]!.slice(0, 200)}\n      at ${f.where}\n`), told.add(sig);
  };
  // Shares of the runs: 60 % tiny solves, 30 % library operations on small designs, 10 % commands.
  const tinyRuns = Math.round(a.runs * 0.6);
  const libRuns = Math.round(a.runs * 0.3);
  const cmdRuns = a.runs - tinyRuns - libRuns;
  // A run stopped from outside still says what it found so far.
  for (const signal of ['SIGINT', 'SIGTERM'] as const) {
    process.on(signal, () => {
      console.log(`stopped by ${signal}; so far:\n${renderTally(tally, performance.now() - started)}`);
      process.exit(130);
    });
  }
  for (const [i, fd] of sampleDesigns(a.seed, tinyRuns, BATCH.tiny).entries()) {
    record(tally, runLibrary(fd, 'solve'), fd.text, { op: 'solve', where: `sampleDesigns(${a.seed}, …, BATCH.tiny)[${i}]` });
    if (i % 10_000 === 9999) progress('tiny designs, solve');
  }
  let done = 0;
  for (let k = 0; done < libRuns; k++) {
    for (const [i, fd] of sampleDesigns(a.seed + 1 + k, 500, BATCH.small).entries()) {
      for (const op of LIBRARY_OPERATIONS.filter((o) => applies(fd, o))) {
        if (done >= libRuns) break;
        record(tally, runLibrary(fd, op), fd.text, { op, where: `sampleDesigns(${a.seed + 1 + k}, 500, BATCH.small)[${i}], ${op}` });
        done++;
      }
    }
    progress('small designs, library');
  }
  done = 0;
  let processes = 0;
  const real = subprocess(60_000);
  for (let k = 0; done < cmdRuns; k++) {
    for (const [i, fd] of sampleDesigns(a.seed + 1_000_000 + k, 100, BATCH.small).entries()) {
      for (const args of commandsFor(fd)) {
        if (done >= cmdRuns) break;
        // One command line in every ~cmdRuns/processes as a real process.
        const asProcess = processes < a.processes && done % Math.max(1, Math.floor(cmdRuns / a.processes)) === 0;
        if (asProcess) processes++;
        record(tally, await runCommandLine(fd.text, args, asProcess ? real : inProcess), fd.text, { args, where: `sampleDesigns(${a.seed + 1_000_000 + k}, 100, BATCH.small)[${i}]${asProcess ? ', as a process' : ''}` });
        done++;
      }
    }
    progress(`commands (${processes} as processes)`);
  }
  const wall = performance.now() - started;
  console.log(`tubemargin fuzz, seed ${a.seed}: ${tinyRuns} tiny solves, ${libRuns} library runs, ${cmdRuns} command runs (${processes} as processes)`);
  console.log(renderTally(tally, wall));
  if (a.shrink) await writeReproducers(tally, a.shrink);
  process.exitCode = tally.failures.size > 0 ? 1 : 0;
}

/** One shrunk design per distinct failure kind and command, written to `dir` as fuzz-N.tube with an index. */
async function writeReproducers(t: Tally, dir: string): Promise<void> {
  mkdirSync(dir, { recursive: true });
  const index: string[] = [];
  let n = 0;
  const done = new Set<string>();
  for (const [sig, f] of t.failures) {
    const key = `${f.kind} ${f.example.signature.split(':')[0]}`;
    if (done.has(key)) continue;
    done.add(key);
    const same = async (text: string) => {
      const r = f.op ? runLibrary({ text, ...railsAndParts(text) }, f.op) : await runCommandLine(text, f.args!, inProcess);
      return r.failures.some((x) => `${x.kind}: ${x.signature}` === sig);
    };
    // A hang is not shrunk: every try would take as long as the hang.
    const small = f.kind === 'hang' ? f.text : await shrinkText(f.text, same);
    n++;
    writeFileSync(join(dir, `fuzz-${n}.tube`), small);
    index.push(`fuzz-${n}.tube  ${sig}${f.kind === 'hang' ? ' (not shrunk)' : ''}\n  ${f.op ? `library ${f.op}` : shellLine(f.args!)}\n  ${f.example.detail.split('\n')[0]}\n  first at ${f.where}`);
  }
  writeFileSync(join(dir, 'INDEX.txt'), index.join('\n') + '\n');
}

/** The rails, buttons and drives of design text, for re-running a library operation on a shrunk copy. */
export function railsAndParts(text: string): Pick<FuzzDesign, 'rails' | 'buttons' | 'drives'> {
  const rails = [...text.matchAll(/^rail (\w+) = (\S+) V/gm)].map((m) => ({ name: m[1]!, volts: Number(m[2]) }));
  const buttons = [...text.matchAll(/^button (\w+)/gm)].map((m) => m[1]!);
  const drives = [...text.matchAll(/^drive (\w+) \(\w+\) (\S+) V/gm)].map((m) => ({ name: m[1]!, volts: Number(m[2]) }));
  return { rails, buttons, drives };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) await main();
