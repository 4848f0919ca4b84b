import type { Design, Switch } from '../design/model.js';
import { buildStageGraph, type StageGraph } from '../graph/stageGraph.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import { simulate, type TransientOptions, type TransientResult } from '../solve/transient.js';
import { unknownWatched, watchedNets } from './stepper.js';
import { stageTimings, statesAt, type StageTiming } from './timing.js';
import type { Waveform } from './waveform.js';

export interface PulseOptions extends Omit<TransientOptions, 'inputs'> {
  /** Waveforms by drive part name. */
  inputs: ReadonlyMap<string, Waveform>;
  /** Nets whose states to report (default: every logic net the builder would name). */
  nets?: string[];
}

/** What one input pulse did: the state just before the next pulse (or at the end), and which latches it flipped. */
export interface PulseOutcome {
  /** The drive that pulsed, and when its pulse began (seconds). */
  input: string;
  at: number;
  /** When the outcome was judged: just before the next pulse of any input, or the end of the run. */
  judgedAt: number;
  states: boolean[];
  /** Latches (`q/nq`, by their two nets) whose state this pulse changed. */
  flipped: string[];
}

export interface PulseRun {
  run: TransientResult;
  graph: StageGraph;
  nets: string[];
  pulses: PulseOutcome[];
  stages: StageTiming[];
  latches: [string, string][];
  /** The logic states of any nets at time t of the run. */
  statesAt(nets: readonly string[], t: number): boolean[];
}

/**
 * A simulation in time read as logic: every pulse of every clock or pulse input in time
 * order, the watched nets' states just before the next pulse begins (so each pulse's
 * outcome has had all the time the clock gives it), which latches each pulse flipped, and
 * each stage's propagation delay and rise and fall times.
 */
export function pulseDesign(design: Design, options: PulseOptions): PulseRun | { diagnostics: Diagnostic[] } {
  const graph = buildStageGraph(design);
  const diagnostics: Diagnostic[] = [];
  const drives = new Set(design.parts.filter((p) => p.type === 'drive').map((p) => p.name));
  for (const name of options.inputs.keys()) {
    if (drives.has(name)) continue;
    const contact = design.parts.find((p): p is Switch => p.name === name && p.type === 'switch');
    // A contact keeps its position through a run in time; a drive on its net stands in for it.
    const notes = contact ? [`'${name}' is a ${contact.momentary ? 'button' : 'switch'}: give its net a 'drive' at its idle level (through a source resistance) and move that; or operate it with --after`] : [];
    diagnostics.push(error('unknown-part', `'${name}' is no drive of the design: a waveform drives a 'drive' input (${[...drives].join(', ') || 'the design has none'})`, undefined, notes));
  }
  const logic = new Set(graph.nets.map((n) => n.name));
  const nets = options.nets ?? watchedNets(graph);
  diagnostics.push(...unknownWatched(nets, logic));
  if (diagnostics.length > 0) return { diagnostics };
  const run = simulate(design, options);
  if (!('times' in run)) return run;
  const stop = run.times[run.times.length - 1]!;
  // A pulse that starts as the run ends has had no time to act: it is left out.
  const starts = [...options.inputs]
    .flatMap(([input, w]) => w.pulseStarts(stop).map((at) => ({ input, at })))
    .filter((p) => p.at < stop * (1 - 1e-9))
    .sort((a, b) => a.at - b.at);
  const triggers = design.parts.flatMap((p) => (p.type === 'drive' && options.inputs.has(p.name) ? [p.node] : []));
  const latches = graph.loops.filter((l) => l.kind === 'latch').map((l) => l.nets as [string, string]);
  const latchState = (t: number) => statesAt(design, run, latches.map(([a]) => a), t);
  const before = (t: number) => t * (1 - 1e-9);
  const pulses = starts.map(({ input, at }, k) => {
    const judgedAt = k + 1 < starts.length ? before(starts[k + 1]!.at) : stop;
    const was = latchState(before(at));
    const now = latchState(judgedAt);
    return { input, at, judgedAt, states: statesAt(design, run, nets, judgedAt), flipped: latches.filter((_, i) => was[i] !== now[i]).map(([a, b]) => `${a}/${b}`) };
  });
  return { run, graph, nets, pulses, stages: stageTimings(design, graph, run, triggers), latches, statesAt: (which, t) => statesAt(design, run, which, t) };
}
