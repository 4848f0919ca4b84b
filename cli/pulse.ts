import { stringify } from 'csv-stringify/sync';
import {
  clockLimit,
  designNets,
  parseQuantity,
  parseWaveform,
  pulseDesign,
  stepDesign,
  TIMING_CORNERS,
  WAVEFORM_FORMS,
  type ClockLimitResult,
  type PulseRun,
  type Waveform,
} from '../lib/index.js';
import { FARADS, SECONDS } from '../lib/netlist/units.js';
import { formatSI, table, wrap } from '../lib/report/format.js';
import { pulseVerdict, renderPulseReport } from '../lib/report/htmlReport.js';
import { safetyCautions } from '../lib/report/safety.js';
import { figure } from '../lib/report/figure.js';
import { withProgress } from './progress.js';
import type { CliIo } from './io.js';
import { EXIT, checkHints, loadForCommand, readStates, report, usageError, type GlobalOptions } from './load.js';
import { refuseToOverwrite, writeReport } from './report.js';
import { readSequence } from './step.js';
import { append } from '../lib/lists.js';

export const PULSE_SUMMARY = 'simulate the design in time under input waveforms: states, delays, fastest clock';

export const PULSE_HELP = `
Drives inputs with waveforms and simulates the circuit in time: every
capacitor of the design, each tube's grid-cathode, grid-plate (Miller) and
plate-cathode capacitance from the library, and a stray capacitance on every
net (--stray, or the design's; 10 pF unless set), integrated by the
trapezoidal rule with error-controlled steps.
Prints the watched nets' states after each pulse and the latches each pulse
flipped, and each stage's propagation delay and rise and fall times.
--fastest then searches for the shortest clock period at which the states after
every pulse still match, in the nominal, slow and weak corners, and names the
stage that limits it. Waveforms (a drive's name, '=', then one of):
  ${WAVEFORM_FORMS.join('\n  ')}
--after runs a step sequence first (as 'tubemargin step' does), so the run
starts from the state it leaves: --after "pulse RESET".
Exit code 0 when the run finishes and every --expect holds, 1 when not, 2 for
bad input.`;

export interface PulseCliOptions extends GlobalOptions {
  input?: string[];
  for?: string;
  nets?: string;
  hint?: string[];
  after?: string;
  stray?: string;
  expect?: string;
  fastest?: boolean;
  csv?: string;
  probe?: string;
  output?: string;
  json?: boolean;
}

/** The first line of every waveform CSV this command writes: an existing file that starts otherwise is never overwritten. */
const CSV_FIRST_COLUMN = 'time_s';

export async function runPulse(file: string, options: PulseCliOptions, io: CliIo): Promise<number> {
  const inputs = new Map<string, Waveform>();
  for (const given of options.input ?? []) {
    const m = /^([^=\s]+)\s*=\s*(.+)$/.exec(given);
    if (!m) return usageError(io, `--input takes DRIVE=WAVEFORM, not '${given}'`);
    const w = parseWaveform(m[2]!);
    if ('error' in w) return usageError(io, `--input ${m[1]}: ${w.error}`);
    inputs.set(m[1]!, w.value);
  }
  if (options.for === undefined) return usageError(io, 'give the length of the run: --for 300us');
  const stop = parseQuantity(options.for, SECONDS, '--for');
  if ('error' in stop || !(stop.value > 0)) return usageError(io, 'error' in stop ? stop.error : '--for must be above zero');
  const stray = options.stray === undefined ? undefined : parseQuantity(options.stray, FARADS, '--stray');
  if (stray && ('error' in stray || !(stray.value >= 0))) return usageError(io, 'error' in stray ? stray.error : '--stray cannot be negative');
  const hints = readStates(options.hint ?? [], '--hint', io);
  if (typeof hints === 'number') return hints;
  const expected = readStates((options.expect ?? '').split(/[\s,]+/).filter(Boolean), '--expect', io);
  if (typeof expected === 'number') return expected;
  if (options.fastest && ![...inputs.values()].some((w) => w.period !== undefined)) return usageError(io, '--fastest needs a clock(...) input whose period it can shorten');
  // Output paths are checked before the simulation, which can take many seconds.
  if (options.output !== undefined) {
    const refused = refuseToOverwrite(options.output, io);
    if (refused !== undefined) return refused;
  }
  if (options.csv !== undefined) {
    const refused = refuseToOverwrite(options.csv, io, CSV_OWNED);
    if (refused !== undefined) return refused;
  }
  const loaded = loadForCommand(file, io, options);
  if (!loaded) return EXIT.badInput;
  const { design } = loaded;
  const badHint = checkHints(design, hints, io);
  if (badHint !== undefined) return badHint;
  const probes = options.probe?.split(',').map((n) => n.trim()).filter(Boolean) ?? [];
  const allNets = new Set(designNets(design));
  for (const p of probes) if (!allNets.has(p)) return usageError(io, `--probe names '${p}', which is no net of the design ('tubemargin show' lists them)`);

  let start: Map<string, number> | undefined;
  if (options.after !== undefined) {
    const sequence = readSequence(options.after, '--after', loaded.sources, io);
    if (typeof sequence === 'number') return sequence;
    const stepped = stepDesign(design, sequence.actions, { hints });
    if (!('rows' in stepped)) {
      report(stepped.diagnostics, sequence.sources, io, 'the --after sequence names what the design lacks; fix it and run again');
      return EXIT.badInput;
    }
    if (!stepped.ok || !stepped.final) {
      io.stderr(`the --after sequence did not ${stepped.final ? 'meet its expectations' : 'solve'}: run it with 'tubemargin step' to see where\n`);
      return EXIT.failed;
    }
    start = stepped.final;
  }
  const nets = options.nets?.split(',').map((n) => n.trim()).filter(Boolean);
  const settings = { inputs, stop: stop.value, hints, start, nets, strayFarads: stray && 'value' in stray ? stray.value : undefined };
  const r = pulseDesign(design, settings);
  if (!('run' in r)) {
    // A drive or net the options name that the design lacks is a usage error, not the design's.
    const ofOptions = r.diagnostics.filter((d) => d.span === undefined && ['unknown-part', 'unknown-net', 'short-circuit'].includes(d.code));
    if (ofOptions.length > 0) {
      for (const d of ofOptions) usageError(io, [d.message, ...d.notes].join('; '));
      return EXIT.badInput;
    }
    report(r.diagnostics, loaded.sources, io);
    return EXIT.failed;
  }
  // The start's warnings (a hint that did not hold, say) go to stderr like a solve's.
  report(r.run.diagnostics.filter((d) => d.severity === 'warning'), loaded.sources, io);
  for (const e of expected) if (!r.nets.includes(e.net) && !r.latches.flat().includes(e.net)) return usageError(io, `--expect names '${e.net}', which is no watched logic net`);
  const finalStates = r.statesAt(
    expected.map((e) => e.net),
    r.run.times[r.run.times.length - 1]!,
  );
  const misses = expected.filter((e, i) => finalStates[i] !== e.high);

  let limit: ClockLimitResult | undefined;
  if (options.fastest) {
    const found = await withProgress(io, 'fastest clock', (onProgress) => clockLimit(design, { ...settings, nets: r.nets, onProgress }));
    if (!('runs' in found)) {
      report(found.diagnostics, loaded.sources, io);
      return EXIT.failed;
    }
    limit = found;
  }

  // The waveforms written: the driven inputs, the watched nets and any probed net.
  const driven = design.parts.flatMap((p) => (p.type === 'drive' && inputs.has(p.name) ? [p.node] : []));
  const recorded = [...new Set([...driven, ...r.nets, ...probes])];
  if (options.csv !== undefined) {
    const code = writeCsv(options.csv, r, recorded, io);
    if (code !== EXIT.ok) return code;
  }
  // The waveforms' extremes, for the safety cautions: piecewise linear, so they lie at their corners.
  const applied = [...inputs].flatMap(([name, w]) => [0, stop.value, ...w.corners(stop.value)].map((t) => ({ name, volts: w.at(t) })));
  if (options.output !== undefined) {
    const html = await renderPulseReport({
      design,
      source: file,
      run: r,
      inputs: new Map([...inputs].map(([k, w]) => [k, w.text])),
      limit,
      plotted: recorded,
      applied,
      expected,
      missed: misses,
      warnings: r.run.diagnostics.filter((d) => d.severity === 'warning'),
    });
    const failed = writeReport(options.output, html, io);
    if (failed !== undefined) return failed;
    io.stderr(`wrote ${options.output}\n`);
  }
  const ok = r.run.ok && misses.length === 0 && (!limit || limit.passing !== undefined);
  const cautions = safetyCautions(design, applied);
  if (options.json) {
    io.stdout(JSON.stringify({ ...pulseJson(r, inputs, stop.value, misses, limit, recorded), cautions }, null, 1) + '\n');
    return ok ? EXIT.ok : EXIT.failed;
  }
  io.stdout(pulseText(file, design.title, r, inputs, stop.value, expected, misses, limit).join('\n') + '\n');
  for (const c of cautions) io.stdout(wrap(c, 80).join('\n') + '\n');
  return ok ? EXIT.ok : EXIT.failed;
}

/** How a waveform CSV of ours is known: a file that does not start so is never overwritten. */
const CSV_OWNED = { mark: `${CSV_FIRST_COLUMN},`, what: 'a tubemargin waveform CSV' };

/** Writes time and the voltage of each of `nets` as CSV (its path was checked by `refuseToOverwrite` before the run). */
function writeCsv(path: string, r: PulseRun, nets: string[], io: CliIo): number {
  const traces = nets.map((n) => r.run.volts(n)!);
  const rows = r.run.times.map((t, i) => [t.toPrecision(9), ...traces.map((v) => v[i]!.toFixed(4))]);
  return writeReport(path, stringify([[CSV_FIRST_COLUMN, ...nets], ...rows]), io) ?? EXIT.ok;
}

const bits = (states: boolean[]) => states.map((s) => (s ? '1' : '0')).join('');
const si = (x: number | undefined, unit: string) => (x === undefined ? '—' : formatSI(x, unit));

function pulseJson(r: PulseRun, inputs: Map<string, Waveform>, stop: number, misses: { net: string; high: boolean }[], limit: ClockLimitResult | undefined, recorded: string[]) {
  return {
    schema: 'tubemargin.pulse/1',
    seconds: stop,
    finished: r.run.ok,
    inputs: Object.fromEntries([...inputs].map(([k, w]) => [k, w.text])),
    steps: { accepted: r.run.accepted, rejected: r.run.rejected, newtonIterations: r.run.newtonIterations },
    nets: r.nets,
    pulses: r.pulses.map((p) => ({ input: p.input, at: p.at, judgedAt: p.judgedAt, state: bits(p.states), flipped: p.flipped })),
    stages: r.stages,
    expectations: { met: misses.length === 0, missed: misses },
    ...(limit ? { fastest: limitJson(limit) } : {}),
    waves: { time: r.run.times, volts: Object.fromEntries(recorded.map((n) => [n, Array.from(r.run.volts(n)!, (v) => Math.round(v * 1e4) / 1e4)])) },
  };
}

function limitJson(l: ClockLimitResult) {
  return {
    givenPeriod: l.givenPeriod,
    ...figure('passingPeriod', l.passing, 'the clock fails even at the period given: no passing period was found'),
    failing: l.failing ?? null,
    ...(l.failing ? {} : { failingWhy: 'every period tried passed: no failing period was found within the search' }),
    limitingStage: l.limiting ?? null,
    ...(l.limiting ? {} : { limitingStageWhy: l.passing === undefined ? 'no passing period to time the stages at' : 'no stage could be named as the one that limits the clock' }),
    slowest: l.slowest,
    runs: l.runs,
  };
}

function pulseText(file: string, title: string, r: PulseRun, inputs: Map<string, Waveform>, stop: number, expected: { net: string; high: boolean }[], misses: { net: string; high: boolean }[], limit: ClockLimitResult | undefined): string[] {
  const out = [`${title || '(untitled design)'} — ${file}`];
  // The verdict first, as check gives it and as the exit code says it.
  append(out, wrap(pulseVerdict({ run: r, limit, expected, missed: misses }).text, 80));
  append(out, wrap(`Simulated ${si(stop, 's')} in ${r.run.accepted} steps (${r.run.rejected} taken again): trapezoidal rule, steps by truncation error.`, 80));
  for (const [name, w] of inputs) append(out, wrap(`${name} = ${w.text}`, 78, '  ').map((line) => `  ${line}`));
  out.push('Watched nets, in the order of the state column:');
  r.nets.forEach((n, i) => out.push(`  ${String(i + 1).padStart(2)}. ${n}`));
  out.push('');
  if (r.pulses.length === 0) {
    // Only steady levels and points: no pulse to judge, so the state the run ends in.
    const end = r.run.times[r.run.times.length - 1]!;
    out.push(`No clock or pulse input; the state at the end (${si(end, 's')}): ${bits(r.statesAt(r.nets, end))}`, '');
  } else {
    append(out, table(['  pulse', 'input', 'at', 'state after', 'flipped'], r.pulses.map((p, i) => [`  ${i + 1}`, p.input, si(p.at, 's'), bits(p.states), p.flipped.length === 0 ? 'none' : p.flipped]), [7, 12, 10, 24]));
    out.push('  (state after: each watched net just before the next pulse, 1 high, 0 low)', '');
  }
  const stages = [...r.stages].sort((a, b) => (b.delay?.seconds ?? 0) - (a.delay?.seconds ?? 0)).slice(0, 10);
  if (stages.length > 0) {
    out.push(`Stages that switched, longest delay first (${Math.min(10, r.stages.length)} of ${r.stages.length}); rise and fall 10–90 %:`);
    append(out, table(['  stage', 'delay', 'from', 'rise', 'fall', 'switched'], stages.map((s) => [`  ${s.stage}`, si(s.delay?.seconds, 's'), s.delay?.from ?? '', si(s.rise, 's'), si(s.fall, 's'), `${s.transitions}×`]), [16, 10, 12, 10, 10]));
    out.push('');
  }
  for (const m of misses) {
    // Name the latch and what the pulses did to it: the stage that failed to switch.
    const latch = r.latches.find((l) => l.includes(m.net));
    const name = latch?.join('/');
    const flips = name ? r.pulses.filter((p) => p.flipped.includes(name)).length : 0;
    const said = latch ? `: latch ${name} flipped on ${flips === 0 ? 'no pulse' : `${flips} of ${r.pulses.length} pulses`}` : '';
    append(out, wrap(`Expected ${m.net}=${m.high ? 1 : 0} at the end, NOT met${said}.`, 80));
  }
  if (limit) append(out, limitText(limit));
  return out;
}

function limitText(l: ClockLimitResult): string[] {
  const out: string[] = [];
  const corner = (name: string) => TIMING_CORNERS.find((c) => c.name === name)!;
  const f = l.failing;
  const what = f
    ? f.pulse === 0
      ? `the run did not finish (${f.why})`
      : `after pulse ${f.pulse}, ${f.wrong
          .slice(0, 4)
          .map((w) => `${w.net} should be ${w.expected ? 1 : 0}`)
          .join(', ')}${f.wrong.length > 4 ? ` and ${f.wrong.length - 4} more nets are wrong` : ''}`
    : '';
  if (l.passing === undefined) {
    append(out, wrap(`Fastest clock: FAILS at the given period, ${si(l.givenPeriod, 's')}, in the ${f!.corner} corner (${corner(f!.corner).description}): ${what}.`, 80));
    return out;
  }
  const rate = (p: number) => si(1 / p, 'Hz');
  append(out, wrap(`Fastest clock in worst case: a period of ${si(l.passing, 's')} (${rate(l.passing)}) counts as the given clock does in every corner (${TIMING_CORNERS.map((c) => c.name).join(', ')}).`, 80));
  if (f) append(out, wrap(`At ${si(f.period, 's')} it fails in the ${f.corner} corner (${corner(f.corner).description}): ${what}.`, 80));
  else out.push(`It still counted at ${si(l.passing, 's')}, the shortest period tried.`);
  if (l.limiting) append(out, wrap(`Limiting stage: ${l.limiting.stage} (delay ${si(l.limiting.delay?.seconds, 's')} from ${l.limiting.delay?.from ?? '—'}, rise ${si(l.limiting.rise, 's')}, fall ${si(l.limiting.fall, 's')} at ${si(l.passing, 's')}).`, 80));
  out.push(`${l.runs} simulations.`);
  return out;
}
