import type { Design } from '../design/model.js';
import { buildStageGraph } from '../graph/stageGraph.js';
import { error, type Diagnostic } from '../source/diagnostic.js';
import { AGEING_SCENARIOS, heaterEmission, type AgeingScenario } from './ageing.js';
import { checkMargins } from './check.js';
import type { Progress } from '../progress.js';

/** One swept rail: its nominal volts replaced by each value from `from` to `to` in `step`s. */
export interface SweepAxis {
  rail: string;
  from: number;
  to: number;
  step: number;
}

export interface RailSweepOptions {
  axes: SweepAxis[];
  /** Heater voltage as a fraction of nominal (1 when absent); emission follows `heaterEmission`. */
  heater?: number;
  requiredMargin?: number;
  scenario?: AgeingScenario;
  /** Told after every point of the grid. */
  onProgress?: Progress;
}

/** One point of the map. */
export interface SweepPoint {
  pass: boolean;
  /** Failing nets and latches, and the weakest net. */
  failures: number;
  weakest: string | undefined;
}

export interface RailSweepResult {
  axes: { rail: string; values: number[]; nominal: number }[];
  heater: number;
  /** `grid[j][i]`: value i of the first axis, value j of the second (one row for one axis). */
  grid: SweepPoint[][];
  /** The grid point nearest the nominal rail voltages. */
  nominalPoint: number[];
  /**
   * Along each axis, through the nominal point: the passing stretch of grid values that
   * holds the nominal one (undefined when the nominal point fails), and where the nominal
   * sits in it (0 at the low edge, 1 at the high edge; undefined when the nominal lies
   * outside the sweep, whose nearest point then stands for it).
   */
  window: { rail: string; low: number | undefined; high: number | undefined; position: number | undefined }[];
}

/** Largest number of points a sweep may solve. */
export const MAX_SWEEP_POINTS = 4096;

/** The values of an axis, `from` to `to` inclusive (to within a millionth of a step). */
export function axisValues(a: SweepAxis): number[] {
  const n = Math.floor((a.to - a.from) / a.step + 1e-6);
  return Array.from({ length: n + 1 }, (_, k) => a.from + k * a.step);
}

/**
 * The supply window: the worst-case check run at every point of a grid of rail voltages
 * (each rail's nominal moved, its tolerance kept), with the heaters at a chosen fraction of
 * their voltage: the old practice of marginal checking, lowering supplies or heaters
 * until weak stages fail, done before building. A point passes when `check` passes
 * there. Returns diagnostics for a rail that does not exist, a bad axis, or too many
 * points.
 *
 * Example: sweeping the plate supply of the pentode latch from 16 V to 32 V shows from
 * which B+ upwards it holds with the required margin.
 */
export function sweepRails(design: Design, options: RailSweepOptions): RailSweepResult | { diagnostics: Diagnostic[] } {
  const problems: string[] = [];
  for (const a of options.axes) {
    if (!design.rails.some((r) => r.name === a.rail)) problems.push(`no rail named '${a.rail}'; the rails are ${design.rails.map((r) => r.name).join(', ') || 'none'}`);
    if (!(a.step > 0) || !(a.to >= a.from)) problems.push(`the sweep of '${a.rail}' must run upwards from FROM to TO in steps above 0`);
  }
  if (options.axes.length < 1 || options.axes.length > 2) problems.push('a sweep takes one or two rails');
  const valuesOf = options.axes.map((a) => (a.step > 0 && a.to >= a.from ? axisValues(a) : []));
  const points = valuesOf.reduce((n, v) => n * v.length, 1);
  if (problems.length === 0 && points > MAX_SWEEP_POINTS) problems.push(`${points} points: a sweep takes at most ${MAX_SWEEP_POINTS}`);
  if (problems.length > 0) return { diagnostics: problems.map((message) => error('sweep-range', message, undefined)) };
  // What makes the design itself unfit for a check (nothing to check) is the design's error, not a failing point.
  const graph = buildStageGraph(design);
  if (graph.nets.length === 0) {
    const refused = checkMargins(design, { graph, headroom: false });
    if (!('verdict' in refused)) return refused;
  }

  const heater = options.heater ?? 1;
  const base = options.scenario ?? AGEING_SCENARIOS[0]!;
  const scenario: AgeingScenario = heater === 1 ? base : { ...base, name: `${base.name}, heaters at ${Math.round(heater * 100)} %`, emissionScale: heaterEmission(heater) };
  const [first, second] = valuesOf as [number[], number[] | undefined];
  const rows = second ?? [NaN];
  let done = 0;
  options.onProgress?.('points', 0, points);
  const grid = rows.map((v2) =>
    first.map((v1): SweepPoint => {
      const volts = new Map([[options.axes[0]!.rail, v1]]);
      if (second) volts.set(options.axes[1]!.rail, v2);
      const moved: Design = { ...design, rails: design.rails.map((r) => (volts.has(r.name) ? { ...r, volts: volts.get(r.name)! } : r)) };
      const r = checkMargins(moved, { requiredMargin: options.requiredMargin, scenario, headroom: false, graph, refine: false });
      options.onProgress?.('points', ++done, points);
      if (!('verdict' in r)) return { pass: false, failures: 1, weakest: undefined };
      const failures = r.nets.filter((n) => n.status === 'fail').length + r.latches.filter((l) => !l.holds || l.inputs.some((i) => !i.switches && i.note === undefined)).length;
      return { pass: r.verdict === 'pass', failures, weakest: r.nets[0]?.name };
    }),
  );
  const axes = options.axes.map((a, k) => ({ rail: a.rail, values: valuesOf[k]!, nominal: design.rails.find((r) => r.name === a.rail)!.volts }));
  const nearest = (values: number[], v: number) => values.reduce((best, x, i) => (Math.abs(x - v) < Math.abs(values[best]! - v) ? i : best), 0);
  const nominalPoint = axes.map((a) => nearest(a.values, a.nominal));
  const at = (i: number, j: number) => grid[j]![i]!.pass;
  const window = axes.map((a, k) => {
    const [i0, j0] = [nominalPoint[0]!, nominalPoint[1] ?? 0];
    const passes = (idx: number) => (k === 0 ? at(idx, j0) : at(i0, idx));
    const start = k === 0 ? i0 : j0;
    if (!passes(start)) return { rail: a.rail, low: undefined, high: undefined, position: undefined };
    let lo = start;
    let hi = start;
    while (lo > 0 && passes(lo - 1)) lo--;
    while (hi < a.values.length - 1 && passes(hi + 1)) hi++;
    const low = a.values[lo]!;
    const high = a.values[hi]!;
    const inside = a.nominal >= a.values[0]! && a.nominal <= a.values[a.values.length - 1]!;
    return { rail: a.rail, low, high, position: high > low && inside ? (a.nominal - low) / (high - low) : undefined };
  });
  return { axes, heater, grid, nominalPoint, window };
}
