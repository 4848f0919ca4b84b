import type { Receiver } from '../graph/stageGraph.js';
import type { TransferCurve } from './staticNoiseMargin.js';
import { unityGainPoints } from './unityGain.js';
import type { LevelChain } from './levelChain.js';
import type { LocalProblem } from './localProblem.js';

/** The input thresholds of one receiving stage, seen from the net that drives it. */
export interface ReceiverThresholds {
  /** The receiving stage's output net. */
  stage: string;
  section: string;
  /** Unity-gain points at nominal values; undefined when the stage's gain never reaches 1. */
  nominal: { vil: number; vih: number } | undefined;
  /** VIL at the corner that makes the stage switch earliest, VIH at the one that makes it switch latest. */
  vilMin: number | undefined;
  vihMax: number | undefined;
  curves: { nominal: TransferCurve; early: TransferCurve; late: TransferCurve };
  /**
   * The curves at the corners the linearised sensitivity picks (shifted furthest left and
   * right) as well as the early and late ones: a latch's worst butterfly is the smallest
   * over every pair of them.
   */
  extremes: TransferCurve[];
  /** The parameter values of the early and late curves, in the order of the stage's region parameters (the swept level at 0). */
  corners: { early: Float64Array; late: Float64Array };
  /** Identifies the curves: receivers with equal keys have equal curves. */
  key: string;
}

/** Points of each transfer-curve sweep, ends included. */
export const SWEEP_POINTS = 161;

/** The range a driving net is swept over: its levels, a quarter of the swing below and a tenth above, within the rails. */
export function sweepRange(chain: LevelChain, driving: string): { lo: number; hi: number; from: number; to: number } {
  const l = chain.levels.get(driving)!;
  const lo = l.canLow ? Math.min(l.lowNominal, l.lowWorst) : chain.railMin;
  const hi = l.canHigh ? Math.max(l.highNominal, l.highWorst) : chain.railMax;
  const swing = Math.max(1, hi - lo);
  return { lo, hi, from: Math.max(chain.railMin, lo - 0.25 * swing), to: Math.min(chain.railMax, hi + 0.1 * swing) };
}

/**
 * A receiving stage's transfer curve: its output (the problem's target) as parameter
 * `swept` (the driving net's level) runs from \`from\` to \`to\`, the other parameters at
 * \`values\`; undefined where a point does not solve. Its points' solutions go to
 * \`starts\`, for a search to start a neighbouring corner's points from.
 */
export function sweepCurve(problem: LocalProblem, values: Float64Array, swept: number, from: number, to: number, starts = new SweepStarts(problem, SWEEP_POINTS)): TransferCurve | undefined {
  const vin: number[] = [];
  const vout: number[] = [];
  for (let k = 0; k < SWEEP_POINTS; k++) {
    const v = from + ((to - from) * k) / (SWEEP_POINTS - 1);
    values[swept] = v;
    if (!starts.solve(values, k)) return undefined;
    vin.push(v);
    vout.push(problem.volts(problem.target));
  }
  return { vin, vout };
}

/**
 * The transfer curve of a receiving stage as a function of the net that drives it, with
 * the stage's own divider, plate load and the grids it feeds in place (its local region),
 * its other inputs low; and from it the unity-gain input thresholds VIL and VIH (Hodges
 * and Jackson). In worst case the curve is taken at two corners of the stage's bands: the
 * one with the lowest VIL (early) and the one with the highest VIH (late), each searched
 * from the corner the linearised sensitivity of the output at the middle of the input
 * swing picks (`extremeCorner`). Undefined for a receiver that is not an inverting stage, or whose stage
 * can never go high (another input holds it low).
 *
 * `straightforward` is the reference the tests hold the search to: worked out afresh
 * (nothing shared with alike receivers), every part tried and every corner tried swept
 * whole, with none of the shortcuts `trialPoint` takes.
 */
export function receiverThresholds(chain: LevelChain, driving: string, receiver: Receiver, straightforward = false): ReceiverThresholds | undefined {
  const stage = receiver.output === undefined ? undefined : chain.nets.get(receiver.output);
  if (!stage || stage.polarity !== 'inverting' || !chain.levels.get(stage.name)!.canHigh) return undefined;
  const on = stage.drivers.indexOf(receiver.section);
  const boundary = stage.region.boundaries.indexOf(driving);
  if (boundary < 0) return undefined;
  const { lo, hi, from, to } = sweepRange(chain, driving);
  // The stage's class, or else its region kind and the levels around it, fix the curves: stages alike share them.
  const position = stage.driverPositions[on];
  const memoKey = () => `thresholds|${stage.kind}|${position}|${boundary}|${chain.levelKey(stage, on, driving)}|${from}|${to}`;
  const work = () => {
    const { problem } = chain.problem(stage.region, undefined, stage.kind);
    const bands = chain.bandsOf(stage, on, driving);
    const swept = stage.parameters.length - stage.region.boundaries.length + boundary;
    const nominal = Float64Array.from(bands, (b) => b.nominal);
    nominal[swept] = (lo + hi) / 2;
    const at = problem.probe(nominal);
    if (!at) return undefined;
    const corner = (down: boolean) =>
      Float64Array.from(bands, (b, i) => (i === swept ? 0 : (at.slopes[i]! > 0) === down ? b.low : b.high));
    const nominalCurve = sweepCurve(problem, nominal, swept, from, to);
    const early = extremeCorner(problem, bands, swept, { from, to }, corner(true), 'vil', straightforward);
    const late = extremeCorner(problem, bands, swept, { from, to }, corner(false), 'vih', straightforward);
    if (!nominalCurve || !early || !late) return undefined;
    return {
      key: memoKey(),
      nominal: unityGainPoints(nominalCurve.vin, nominalCurve.vout),
      vilMin: early.points?.vil,
      vihMax: late.points?.vih,
      curves: { nominal: nominalCurve, early: early.curve, late: late.curve },
      extremes: [early.start, late.start, early.curve, late.curve].filter((c, i, all) => all.indexOf(c) === i),
      corners: { early: early.values, late: late.values },
    };
  };
  const found = straightforward ? work() : chain.memoTwice(`thresholds-class|${chain.classOf(stage.name)}|${position}|${boundary}`, memoKey, work);
  return found && { stage: stage.name, section: receiver.section, ...found };
}

/**
 * The solutions of a sweep's points, kept by point, so that each point is solved from its
 * nearest solved neighbour, carried on along the line through that neighbour and the one
 * beyond it when both are solved and the point is at most two steps away; failing that,
 * from the same point of \`seed\` (another corner's sweep, a part away) where it was
 * solved; failing that, from the nearest point solved. The same solution (a receiver's
 * local circuit has one) in fewer Newton iterations than from whatever point was solved last.
 */
export class SweepStarts {
  /** Point k's solution at [k·size, (k + 1)·size), where `solved[k]`. */
  private readonly kept: Float64Array;
  private readonly solved: Uint8Array;
  private readonly size: number;
  private readonly guess: Float64Array;
  constructor(
    private readonly problem: LocalProblem,
    points: number,
    private readonly seed?: SweepStarts,
  ) {
    this.size = problem.solution.length;
    this.kept = new Float64Array(points * this.size);
    this.solved = new Uint8Array(points);
    this.guess = new Float64Array(this.size);
  }

  /** Solves point `k` at `values`; false where it does not solve. */
  solve(values: Float64Array, k: number): boolean {
    const { kept, solved, size, guess } = this;
    let near = -1;
    for (let d = 1; d < solved.length && near < 0; d++) {
      if (solved[k - d]) near = k - d;
      else if (solved[k + d]) near = k + d;
    }
    const distance = Math.abs(k - near);
    const beyond = near + Math.sign(near - k);
    if (near >= 0 && distance <= 2 && solved[beyond]) {
      const a = near * size;
      const b = beyond * size;
      for (let i = 0; i < size; i++) guess[i] = kept[a + i]! + (kept[a + i]! - kept[b + i]!) * distance;
      this.problem.startFrom(guess);
    } else if (this.seed?.solved[k]) this.problem.startFrom(this.seed.kept.subarray(k * size, (k + 1) * size));
    else if (near >= 0) this.problem.startFrom(kept.subarray(near * size, (near + 1) * size));
    if (!this.problem.solve(values)) return false;
    kept.set(this.problem.solution, k * size);
    solved[k] = 1;
    return true;
  }
}

/** Rounds of the corner search for a threshold's extreme at most (each moves every parameter once). */
export const THRESHOLD_ROUNDS = 4;

/**
 * The corner of a receiving stage's bands where a unity-gain point is most extreme (VIL
 * lowest, or VIH highest), from the corner the linearised slopes pick: those points move
 * with the curve's steepness as well as with its position, so a corner that shifts the
 * curve earliest need not give the lowest VIL. Each part in turn is moved to its band's
 * other end and kept there where that makes the point worse, for up to
 * `THRESHOLD_ROUNDS` rounds or until no move does. Each corner tried is swept as far as
 * its point needs (`trialPoint`), on the points of a whole sweep, and every part is tried:
 * a point can jump to another stretch of the curve or sit on a short steep one, which
 * coarser sweeps or a local search from the last point missed by volts in the oracle
 * family, and parts that hardly move the output at the middle of the swing can still move
 * it by volts. The corner kept is swept whole at the end. A corner whose gain never
 * reaches 1 keeps its curve with no points (the stage cannot restore levels there). The
 * curve at `start` comes back too. Undefined where a sweep does not solve. With
 * `sweepAll`, every corner tried is swept whole and every part is tried: the
 * straightforward search, which keeps the same corner.
 */
function extremeCorner(
  problem: LocalProblem,
  bands: readonly { low: number; high: number }[],
  swept: number,
  range: { from: number; to: number },
  start: Float64Array,
  which: 'vil' | 'vih',
  sweepAll = false,
): { values: Float64Array; curve: TransferCurve; points: { vil: number; vih: number } | undefined; start: TransferCurve } | undefined {
  const sign = which === 'vil' ? 1 : -1;
  // Each corner's points start from the best corner's, a part away (`SweepStarts`).
  const whole = (values: Float64Array, starts: SweepStarts) => {
    const curve = sweepCurve(problem, Float64Array.from(values), swept, range.from, range.to, starts);
    return curve && { values, curve, points: unityGainPoints(curve.vin, curve.vout) };
  };
  const trial = (values: Float64Array, bound: number, starts: SweepStarts) => {
    if (!sweepAll) return trialPoint(problem, Float64Array.from(values), swept, range, which, bound, starts);
    const t = whole(values, starts);
    return t?.points?.[which];
  };
  let bestStarts = new SweepStarts(problem, SWEEP_POINTS);
  const first = whole(start, bestStarts);
  if (!first?.points) return first && { ...first, start: first.curve };
  // A part that cannot move the curve (`LocalProblem.inert`) is not tried (its trial would never move) but in the straightforward search.
  const tried = bands.map((_, i) => i).filter((i) => i !== swept && bands[i]!.high > bands[i]!.low && (sweepAll || !problem.inert(i)));
  let best = { values: start, point: first.points[which] };
  // Parts in turn, round after round; a part tried since the last move was tried at the
  // values that stand, so the search ends a full turn after its last move.
  let sinceMove = 0;
  for (let k = 0; k < THRESHOLD_ROUNDS * tried.length && sinceMove < tried.length; k++) {
    const i = tried[k % tried.length]!;
    const b = bands[i]!;
    const values = Float64Array.from(best.values);
    values[i] = values[i] === b.low ? b.high : b.low;
    const starts = new SweepStarts(problem, SWEEP_POINTS, bestStarts);
    const point = trial(values, best.point, starts);
    if (typeof point === 'number' && sign * point < sign * best.point) {
      best = { values, point };
      bestStarts = starts;
      sinceMove = 1;
    } else sinceMove++;
  }
  const kept = best.values === start ? first : whole(best.values, new SweepStarts(problem, SWEEP_POINTS, bestStarts));
  if (kept) return { ...kept, start: first.curve };
  // The corner kept does not solve at a point its trial never reached: the search again,
  // every corner tried swept whole, so that a corner that does not sweep is never kept.
  return sweepAll ? undefined : extremeCorner(problem, bands, swept, range, start, which, true);
}

/**
 * The unity-gain point `which` of a trial corner in `extremeCorner` where it passes
 * \`bound\` (VIL below it, VIH above it), else \`'no better'\`. The curve is swept, on
 * the points of \`sweepCurve\`, from the end its point is measured from (VIL from the
 * lowest input up, VIH from the highest down), and only as far as decides it: the first −1
 * crossing seen is the point (unityGainPoints' VIL is the first crossing, its VIH the last),
 * and without one the crossing still to come lies beyond the last midpoint swept, so the
 * point cannot pass the bound. The search so keeps exactly the corners a whole sweep of
 * each would. The flat stretch before the last two steps short of the bound is passed on
 * few points where it can be (`flatStretch`), the steps beside the bound one by one. A VIH
 * curve still at a slope of −1 at its top with no crossing is swept whole, as only the
 * whole curve tells its point. Undefined where a point does not solve. The points solved
 * go to \`starts\`.
 */
export function trialPoint(problem: LocalProblem, values: Float64Array, swept: number, range: { from: number; to: number }, which: 'vil' | 'vih', bound: number, starts = new SweepStarts(problem, SWEEP_POINTS)): number | 'no better' | undefined {
  const n = SWEEP_POINTS;
  const vin = new Array<number>(n).fill(Number.NaN);
  const vout = new Array<number>(n).fill(Number.NaN);
  const at = (k: number) => range.from + ((range.to - range.from) * k) / (n - 1);
  const solved = (k: number) => {
    if (!Number.isNaN(vout[k]!)) return true;
    values[swept] = at(k);
    if (!starts.solve(values, k)) return false;
    vin[k] = values[swept]!;
    vout[k] = problem.volts(problem.target);
    return true;
  };
  const slope = (i: number) => (vout[i + 1]! - vout[i]!) / (vin[i + 1]! - vin[i]!);
  const mid = (i: number) => (vin[i]! + vin[i + 1]!) / 2;
  // Where the crossing between slopes i and i + 1 lies, as unityGainPoints interpolates it.
  const crossing = (i: number) => {
    const s0 = slope(i) + 1;
    const s1 = slope(i + 1) + 1;
    const t = s0 === s1 ? 0.5 : s0 / (s0 - s1);
    return mid(i) + t * (mid(i + 1) - mid(i));
  };
  for (let j = flatStretch(n, at, solved, vout, which, bound); j < n; j++) {
    const k = which === 'vil' ? j : n - 1 - j;
    if (!solved(k)) return undefined;
    if (j === 0) continue;
    if (which === 'vil') {
      // Slopes 0 … k − 1 known: VIL is the input where the slope first reaches −1.
      const point = k === 1 ? (slope(0) <= -1 ? vin[0]! : undefined) : slope(k - 2) > -1 && slope(k - 1) <= -1 ? crossing(k - 2) : undefined;
      if (point !== undefined) return point < bound ? point : 'no better';
      if (mid(k - 1) >= bound) return 'no better';
    } else {
      // Slopes k … n − 2 known: VIH is the input where the slope last leaves −1 (the top input where it never does).
      const point = k < n - 2 && slope(k) <= -1 && slope(k + 1) > -1 ? crossing(k) : undefined;
      if (point !== undefined) return point > bound ? point : 'no better';
      if (mid(k) <= bound && (slope(n - 2) > -1 || vin[n - 1]! <= bound)) return 'no better';
    }
  }
  for (let k = 0; k < n; k++) if (!solved(k)) return undefined;
  const points = unityGainPoints(vin, vout);
  return which === 'vih' && points && points.vih > bound ? points.vih : 'no better';
}

/**
 * How many of `trialPoint`'s points, counted from the end it sweeps from, can be passed
 * over: the stretch up to two steps short of where it would give up against \`bound\` is
 * shown, on few points, to have every slope between neighbouring sweep points above −1, so
 * no unity-gain point lies in it and the sweep may go on from its far end (whose point and
 * the one before are solved, as the crossing test there needs). A stretch whose ends are
 * solved is passed whole when its output falls by less than one sweep step of input: a
 * transfer curve of an inverting stage does not rise with its input (its plate current
 * grows with its grid, and its grid with its input), so no step inside it falls further
 * than the whole; any other stretch is halved, down to single steps, where the slope is
 * tested exactly as the sweep tests it. 0 (sweep every point) where a step in the stretch
 * is as steep as −1, where a point does not solve, or where the stretch is too short.
 */
function flatStretch(n: number, at: (k: number) => number, solved: (k: number) => boolean, vout: number[], which: 'vil' | 'vih', bound: number): number {
  // The point (counted from the sweep's own end) at which trialPoint gives up when no
  // crossing comes first: VIL's first step whose midpoint reaches the bound, VIH's last
  // step whose midpoint is at or below it.
  let stop = 1;
  while (stop < n && (which === 'vil' ? (at(stop - 1) + at(stop)) / 2 < bound : (at(n - 1 - stop) + at(n - stop)) / 2 > bound)) stop++;
  const last = stop - 2;
  if (stop >= n || last < 2) return 0;
  const point = (j: number) => (which === 'vil' ? j : n - 1 - j);
  const step = Math.abs(at(1) - at(0));
  const flat = (lo: number, hi: number): boolean => {
    if (!solved(point(lo)) || !solved(point(hi))) return false;
    const fall = which === 'vil' ? vout[point(lo)]! - vout[point(hi)]! : vout[point(hi)]! - vout[point(lo)]!;
    if (hi === lo + 1) return fall / Math.abs(at(point(hi)) - at(point(lo))) < 1;
    if (fall >= 0 && fall < 0.999 * step) return true;
    const middle = (lo + hi) >> 1;
    return flat(lo, middle) && flat(middle, hi);
  };
  return flat(0, last) && solved(point(last - 1)) ? last + 1 : 0;
}
