import { CAPACITOR_TOL, type Design, type Part } from '../design/model.js';
import { NOMINAL_VARIATION, type SectionVariation } from '../models/tubeEquations.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import { pulseDesign, type PulseOptions, type PulseRun } from './pulseRun.js';
import { causeNets, type StageTiming } from './timing.js';
import type { Waveform } from './waveform.js';
import type { Progress } from '../progress.js';

/** A tolerance corner for timing: how the design is moved off nominal. */
export interface TimingCorner {
  name: 'nominal' | 'slow' | 'weak';
  description: string;
}

/**
 * The corners a clock rate must pass. Timing is not monotone in every part, so these are
 * stated assumptions, not a bound: every capacitance high (the design's by its tolerance,
 * interelectrode and stray by 10 %), every tube at the low end of its spread, every rail at
 * the low end of its magnitude, and the resistors either all high (slow: every RC longest)
 * or all low (weak: each plate load draws its tube's current hardest and the dividers load
 * the plates most).
 */
export const TIMING_CORNERS: readonly TimingCorner[] = [
  { name: 'nominal', description: 'every part at its nominal value' },
  { name: 'slow', description: 'resistors and capacitors high, tubes weak, rails low' },
  { name: 'weak', description: 'resistors low, capacitors high, tubes weak, rails low' },
];

/** The design and simulation settings of one timing corner. */
export function atCorner(design: Design, corner: TimingCorner['name']): { design: Design; variation: Map<string, SectionVariation>; parasiticScale: number } {
  const variation = new Map<string, SectionVariation>();
  if (corner === 'nominal') return { design, variation, parasiticScale: 1 };
  const sign = corner === 'slow' ? 1 : -1;
  const spread = new Map(design.models.map((m) => [m.name, m.spread]));
  const parts = design.parts.map((p): Part => {
    if (p.type === 'resistor') return { ...p, ohms: p.ohms * (1 + sign * p.tol) };
    if (p.type === 'capacitor') return { ...p, farads: p.farads * (1 + p.tol) };
    if (p.type === 'tube') variation.set(p.name, { ...NOMINAL_VARIATION, perveance: 1 - (spread.get(p.model) ?? 0) });
    return p;
  });
  const rails = design.rails.map((r) => ({ ...r, volts: r.volts * (1 - r.tol) }));
  return { design: { ...design, rails, parts }, variation, parasiticScale: 1 + CAPACITOR_TOL };
}

export interface ClockLimitOptions extends PulseOptions {
  /** Stop when the passing and failing periods are within this fraction of each other. */
  resolution?: number;
  /**
   * Told after every trial period (each simulated in every corner). The total is an
   * estimate until the answer is bracketed: the trials so far, one more halving and the
   * bisection of a factor of 2; after, the trials so far and the bisection left.
   */
  onProgress?: Progress;
}

/** Where a run at some clock period went wrong. */
export interface ClockFailure {
  period: number;
  corner: TimingCorner['name'];
  /** The first pulse whose outcome differs from the reference, counted from 1; 0 when the run itself failed. */
  pulse: number;
  /** The nets in the wrong state after it, with the state they should have had. */
  wrong: { net: string; expected: boolean }[];
  /** Why the run failed, when it did not finish. */
  why?: string;
}

export interface ClockLimitResult {
  /** The first clock's period as given (seconds): the reference run's. */
  givenPeriod: number;
  /** The shortest period tried that passed at every corner, and the longest that failed (seconds). */
  passing: number | undefined;
  failing: ClockFailure | undefined;
  /** The stages switching slowest in the limiting corner at the passing period, slowest first. */
  slowest: StageTiming[];
  /** The stage that limits the clock: of the nets that went wrong first and the stages that can set them off (`causeNets`), the slowest in the limiting corner at the passing period. */
  limiting: StageTiming | undefined;
  /** Simulations run. */
  runs: number;
}

/**
 * The highest clock rate at which a counter or ring still counts as it does at the given
 * clock. The reference is a nominal run at the clocks as given: the state of every latch
 * net (every watched net, where the design has no latches) just before each pulse. Each
 * trial scales every clock's period (its width, delay and edges with it where they are
 * percentages) and the run's length together, runs every timing corner, and passes when
 * each corner's states match the reference pulse for pulse. The period is halved until a
 * trial fails, then bisected (geometrically) until passing and failing periods lie within
 * the resolution. The limit is named by the corner, the pulse and the nets that went wrong
 * first, and the slowest stages in that corner at the passing period.
 */
export function clockLimit(design: Design, options: ClockLimitOptions): ClockLimitResult | { diagnostics: Diagnostic[] } {
  const clocks = [...options.inputs.values()].filter((w) => w.period !== undefined);
  if (clocks.length === 0) return { diagnostics: [error('no-clock', 'a speed search needs at least one clock(...) input to scale', undefined)] };
  const given = clocks[0]!.period!;
  const reference = pulseDesign(design, options);
  if (!('run' in reference)) return reference;
  if (!reference.run.ok) return { diagnostics: [error('no-convergence', 'the reference run at the given clock did not finish', undefined), ...reference.run.diagnostics] };
  const judged = reference.latches.length > 0 ? reference.latches.flat() : reference.nets;
  const expected = reference.pulses.map((p) => reference.statesAt(judged, p.judgedAt));
  let runs = 1;
  const scaled = (period: number): Map<string, Waveform> => {
    const f = period / given;
    return new Map([...options.inputs].map(([name, w]) => [name, w.withPeriod && w.period !== undefined ? w.withPeriod(w.period * f) : w]));
  };
  const trial = (period: number): { failure?: ClockFailure; runs: Map<string, PulseRun> } => {
    const done = new Map<string, PulseRun>();
    for (const corner of TIMING_CORNERS) {
      const at = atCorner(design, corner.name);
      // The nominal corner at the given clock is the reference itself: nothing to run again.
      const again = period !== given || corner.name !== 'nominal';
      const r = again ? pulseDesign(at.design, { ...options, inputs: scaled(period), stop: (options.stop * period) / given, variation: at.variation, parasiticScale: at.parasiticScale, nets: reference.nets }) : reference;
      if (again) runs++;
      const fail = (f: Omit<ClockFailure, 'period' | 'corner'>) => ({ failure: { period, corner: corner.name, ...f }, runs: done });
      if (!('run' in r) || !r.run.ok) return fail({ pulse: 0, wrong: [], why: ('run' in r ? r.run.diagnostics : r.diagnostics).find((d) => d.severity === 'error')?.message ?? 'the run did not finish' });
      done.set(corner.name, r);
      // A delay given in seconds does not follow the period, so a trial may fit a pulse more
      // or less than the reference: the pulses both have are compared.
      if (r.pulses.length === 0) return fail({ pulse: 0, wrong: [], why: 'no pulse falls within the run at this period' });
      for (let k = 0; k < Math.min(expected.length, r.pulses.length); k++) {
        const got = r.statesAt(judged, r.pulses[k]!.judgedAt);
        const wrong = judged.flatMap((net, i) => (got[i] === expected[k]![i] ? [] : [{ net, expected: expected[k]![i]! }]));
        if (wrong.length > 0) return fail({ pulse: k + 1, wrong });
      }
    }
    return { runs: done };
  };
  const resolution = options.resolution ?? 0.02;
  const halvings = (ratio: number) => Math.max(0, Math.ceil(Math.log2(Math.log(ratio) / Math.log(1 + resolution))));
  let trials = 0;
  const told = (bracketed: boolean) => options.onProgress?.('trial periods', ++trials, trials + (bracketed ? halvings(passing.period / failing!.period) : 1 + halvings(2)));
  const first = trial(given);
  if (first.failure) return { givenPeriod: given, passing: undefined, failing: first.failure, slowest: [], limiting: undefined, runs };
  let passing = { period: given, runs: first.runs };
  let failing: ClockFailure | undefined;
  told(false);
  for (let k = 0; k < 12 && !failing; k++) {
    const t = trial(passing.period / 2);
    if (t.failure) failing = t.failure;
    else passing = { period: passing.period / 2, runs: t.runs };
    told(failing !== undefined);
  }
  // Bisection on the logarithm of the period: 30 halvings resolve a factor of 2¹² to 1e-5,
  // so the cap only stops a resolution of 0 (or below rounding) from running for ever.
  for (let k = 0; k < 30 && failing && passing.period / failing.period > 1 + resolution; k++) {
    const mid = Math.sqrt(passing.period * failing.period);
    const t = trial(mid);
    if (t.failure) failing = t.failure;
    else passing = { period: mid, runs: t.runs };
    told(true);
  }
  const limiting = passing.runs.get(failing?.corner ?? 'nominal');
  const byTime = (limiting?.stages ?? []).filter((s) => s.delay).sort((a, b) => stageTime(b) - stageTime(a));
  const causes = causeNets(design, reference.graph);
  const suspects = new Set((failing?.wrong ?? []).flatMap(({ net }) => [net, ...(causes.get(net) ?? [])]));
  return { givenPeriod: given, passing: passing.period, failing, slowest: byTime.slice(0, 5), limiting: byTime.find((s) => suspects.has(s.stage)), runs };
}

/** A stage's delay plus its slower transition: how long it takes to pass a change on. */
export function stageTime(s: StageTiming): number {
  return (s.delay?.seconds ?? 0) + Math.max(s.rise ?? 0, s.fall ?? 0) / 2;
}
