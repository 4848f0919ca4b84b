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
 * \`values\`; undefined where a point does not solve.
 */
export function sweepCurve(problem: LocalProblem, values: Float64Array, swept: number, from: number, to: number): TransferCurve | undefined {
  const vin: number[] = [];
  const vout: number[] = [];
  for (let k = 0; k < SWEEP_POINTS; k++) {
    const v = from + ((to - from) * k) / (SWEEP_POINTS - 1);
    values[swept] = v;
    if (!problem.solve(values)) return undefined;
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
 */
export function receiverThresholds(chain: LevelChain, driving: string, receiver: Receiver): ReceiverThresholds | undefined {
  const stage = receiver.output === undefined ? undefined : chain.nets.get(receiver.output);
  if (!stage || stage.polarity !== 'inverting' || !chain.levels.get(stage.name)!.canHigh) return undefined;
  const on = stage.drivers.indexOf(receiver.section);
  const boundary = stage.region.boundaries.indexOf(driving);
  if (boundary < 0) return undefined;
  const { lo, hi, from, to } = sweepRange(chain, driving);
  // The stage's class, or else its region kind and the levels around it, fix the curves: stages alike share them.
  const position = stage.driverPositions[on];
  const memoKey = () => `thresholds|${stage.kind}|${position}|${boundary}|${chain.levelKey(stage, on, driving)}|${from}|${to}`;
  const found = chain.memoTwice(`thresholds-class|${chain.classOf(stage.name)}|${position}|${boundary}`, memoKey, () => {
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
    const early = extremeCorner(problem, bands, swept, { from, to }, corner(true), 'vil');
    const late = extremeCorner(problem, bands, swept, { from, to }, corner(false), 'vih');
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
  });
  return found && { stage: stage.name, section: receiver.section, ...found };
}

/** Rounds of the corner search for a threshold's extreme at most (each moves every parameter once). */
export const THRESHOLD_ROUNDS = 4;

/**
 * The corner of a receiving stage's bands where a unity-gain point is most extreme (VIL
 * lowest, or VIH highest), from the corner the linearised slopes pick: those points move
 * with the curve's steepness as well as with its position, so a corner that shifts the
 * curve earliest need not give the lowest VIL. Each part in turn is moved to its band's
 * other end and kept there where that makes the point worse, for up to
 * `THRESHOLD_ROUNDS` rounds or until no move does. Each corner tried is swept whole, and
 * every part is tried: a point can jump to another stretch of the curve or sit on a short
 * steep one, which coarser sweeps or a local search from the last point missed by volts
 * in the oracle family, and parts that hardly move the output at the middle of the swing
 * can still move it by volts. A corner whose gain never reaches 1 keeps its curve
 * with no points (the stage cannot restore levels there). The curve at `start` comes
 * back too. Undefined where a sweep does not solve.
 */
function extremeCorner(
  problem: LocalProblem,
  bands: readonly { low: number; high: number }[],
  swept: number,
  range: { from: number; to: number },
  start: Float64Array,
  which: 'vil' | 'vih',
): { values: Float64Array; curve: TransferCurve; points: { vil: number; vih: number } | undefined; start: TransferCurve } | undefined {
  const sign = which === 'vil' ? 1 : -1;
  const at = (values: Float64Array, bound?: number) => {
    const curve = bound === undefined ? sweepCurve(problem, Float64Array.from(values), swept, range.from, range.to) : trialCurve(problem, Float64Array.from(values), swept, range, which, bound);
    return curve && curve !== 'no better' ? { values, curve, points: unityGainPoints(curve.vin, curve.vout) } : undefined;
  };
  const first = at(start);
  if (!first?.points) return first && { ...first, start: first.curve };
  const tried = bands.map((_, i) => i).filter((i) => i !== swept && bands[i]!.high > bands[i]!.low);
  let best = first;
  // Parts in turn, round after round; a part tried since the last move was tried at the
  // values that stand, so the search ends a full turn after its last move.
  let sinceMove = 0;
  for (let k = 0; k < THRESHOLD_ROUNDS * tried.length && sinceMove < tried.length; k++) {
    const i = tried[k % tried.length]!;
    const b = bands[i]!;
    const values = Float64Array.from(best.values);
    values[i] = values[i] === b.low ? b.high : b.low;
    const t = at(values, best.points![which]);
    if (t?.points && sign * t.points[which] < sign * best.points![which]) {
      best = t;
      sinceMove = 1;
    } else sinceMove++;
  }
  return { ...best, start: first.curve };
}

/**
 * The transfer curve of a trial corner in `extremeCorner`, swept from the end its point
 * `which` is measured from (VIL from the lowest input up, VIH from the highest down) and
 * abandoned, as \`'no better'\`, as soon as the points swept show that the whole curve's
 * point cannot pass \`bound\` (VIL below it, VIH above it): the first −1 crossing seen
 * decides that, and without one the crossing still to come lies beyond the last midpoint
 * swept. A curve that can pass it is swept whole, on the same points as \`sweepCurve\`, so
 * the search keeps exactly the corners a whole sweep of each would: it only skips the part
 * of a losing corner's curve that cannot change its verdict. Undefined where a point does
 * not solve.
 */
export function trialCurve(problem: LocalProblem, values: Float64Array, swept: number, range: { from: number; to: number }, which: 'vil' | 'vih', bound: number): TransferCurve | 'no better' | undefined {
  const n = SWEEP_POINTS;
  const vin = new Array<number>(n);
  const vout = new Array<number>(n);
  const slope = (i: number) => (vout[i + 1]! - vout[i]!) / (vin[i + 1]! - vin[i]!);
  const mid = (i: number) => (vin[i]! + vin[i + 1]!) / 2;
  // Where the crossing between slopes i and i + 1 lies, as unityGainPoints interpolates it.
  const crossing = (i: number) => {
    const s0 = slope(i) + 1;
    const s1 = slope(i + 1) + 1;
    const t = s0 === s1 ? 0.5 : s0 / (s0 - s1);
    return mid(i) + t * (mid(i + 1) - mid(i));
  };
  let better = false;
  for (let j = 0; j < n; j++) {
    const k = which === 'vil' ? j : n - 1 - j;
    values[swept] = range.from + ((range.to - range.from) * k) / (n - 1);
    if (!problem.solve(values)) return undefined;
    vin[k] = values[swept]!;
    vout[k] = problem.volts(problem.target);
    if (better || j === 0) continue;
    if (which === 'vil') {
      // Slopes 0 … k − 1 known: VIL is the input where the slope first reaches −1.
      const point = k === 1 ? (slope(0) <= -1 ? vin[0]! : undefined) : slope(k - 2) > -1 && slope(k - 1) <= -1 ? crossing(k - 2) : undefined;
      if (point !== undefined) {
        if (point >= bound) return 'no better';
        better = true;
      } else if (mid(k - 1) >= bound) return 'no better';
    } else {
      // Slopes k … n − 2 known: VIH is the input where the slope last leaves −1 (the top input where it never does).
      const point = k < n - 2 && slope(k) <= -1 && slope(k + 1) > -1 ? crossing(k) : undefined;
      if (point !== undefined) {
        if (point <= bound) return 'no better';
        better = true;
      } else if (mid(k) <= bound && (slope(n - 2) > -1 || vin[n - 1]! <= bound)) return 'no better';
    }
  }
  return { vin, vout };
}
