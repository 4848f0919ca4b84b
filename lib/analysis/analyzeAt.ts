import fc from 'fast-check';
import type { Design } from '../design/model.js';
import { checkMargins } from './check.js';
import { type DesignParameter, designParameters } from './parameters.js';
import { Sampler, samplingThresholds } from './monteCarlo.js';

/**
 * A design's parameters as deviations from nominal: −1 at the low end of a part's band,
 * 0 at nominal, +1 at the high end, by parameter id (`R:name`, `V:rail`, `D:drive`,
 * `P:section`, as `designParameters` gives them).
 */
export type Deviations = Readonly<Record<string, number>>;

/** What the design does at one set of deviations. */
export interface Analysis {
  /** Every judged net keeps the required margin, and every latch keeps both its states. */
  pass: boolean;
  /** Each judged net's smallest noise margin over the latch states (volts). */
  margins: Record<string, number>;
  /** The nets below the required margin, and "latch states" when a latch lost one. */
  failing: string[];
}

interface Prepared {
  sampler: Sampler;
  /** Sampler parameter index of each design parameter id. */
  slot: Map<string, number>;
  parameters: DesignParameter[];
  required: number;
}

// Preparing a design (its check, its compiled circuit, its nominal states) is the costly
// part; it is kept per design object, so analyzeAt stays a function of its arguments.
const prepared = new WeakMap<Design, Prepared>();

function prepare(design: Design): Prepared {
  let p = prepared.get(design);
  if (p) return p;
  const check = checkMargins(design, { refine: false });
  if (!('verdict' in check)) throw new RangeError(`the design cannot be solved: ${check.diagnostics.map((d) => d.message).join('; ')}`);
  const sampler = new Sampler(design, { seed: 0, distribution: 'uniform', scenario: 'new', requiredMargin: check.requiredMargin, thresholds: samplingThresholds(check) });
  const kindOf = { R: 'resistor', V: 'rail', D: 'drive', P: 'perveance' } as const;
  const slot = new Map<string, number>();
  const byName = new Map(sampler.parameters.map((q, i) => [`${q.kind}:${q.target}`, i]));
  const parameters = designParameters(design);
  for (const q of parameters) {
    const i = byName.get(`${kindOf[q.id[0] as keyof typeof kindOf]}:${q.target}`);
    if (i !== undefined) slot.set(q.id, i);
  }
  p = { sampler, slot, parameters, required: check.requiredMargin };
  prepared.set(design, p);
  return p;
}

/** A deviation in [−1, 1] as a value in the parameter's band: below nominal towards `low`, above towards `high`. */
export function valueAt(p: DesignParameter, deviation: number): number {
  const d = Math.max(-1, Math.min(1, deviation));
  return d < 0 ? p.nominal + d * (p.nominal - p.low) : p.nominal + d * (p.high - p.nominal);
}

/**
 * The design solved whole at the given deviations (parameters not named stay nominal),
 * every latch in each of its two states, judged against the noise-margin thresholds of
 * a worst-case `check` of the design: the pure function under `check --shrink` and under
 * property tests of a builder's own design.
 *
 * Example: `analyzeAt(design, {}).pass` is true for a design whose nominal values pass;
 * `analyzeAt(design, { 'P:x2.v2': -1 })` asks the same with section x2.v2 at the weak end
 * of its spread.
 */
export function analyzeAt(design: Design, deviations: Deviations): Analysis {
  const p = prepare(design);
  const values = Float64Array.from(p.sampler.parameters, (q) => q.nominal);
  for (const q of p.parameters) {
    const d = deviations[q.id];
    const i = p.slot.get(q.id);
    if (d !== undefined && i !== undefined) values[i] = valueAt(q, d);
  }
  const o = p.sampler.at(values);
  const margins: Record<string, number> = {};
  const failing: string[] = [];
  p.sampler.setup.thresholds.forEach((t, k) => {
    margins[t.net] = o.margins[k]!;
    if (!(o.margins[k]! >= p.required)) failing.push(t.net);
  });
  if (o.lost) failing.push('latch states');
  return { pass: o.pass, margins, failing };
}

/**
 * A fast-check arbitrary over a design's parameters as deviations (see `Deviations`): each
 * anywhere in its band, shrinking towards nominal, so a failing case shrinks to the
 * smallest deviations that still fail. Use it to property-test a design of your own:
 *
 * ```ts
 * fc.assert(fc.property(deviationsOf(design), (d) => analyzeAt(design, d).pass), { seed: 1 });
 * ```
 */
export function deviationsOf(design: Design): fc.Arbitrary<Deviations> {
  const shape: Record<string, fc.Arbitrary<number>> = {};
  for (const q of designParameters(design)) shape[q.id] = fc.double({ min: -1, max: 1, noNaN: true });
  return fc.record(shape);
}
