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
 * and Jackson). In worst case the curve is taken at two corners chosen by the linearised
 * sensitivity of the output at the middle of the input swing: the corner that pulls the
 * output down (the stage switches early: lowest VIL) and the one that holds it up (late:
 * highest VIH). Undefined for a receiver that is not an inverting stage, or whose stage
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
    const sweep = (values: Float64Array) => sweepCurve(problem, values, swept, from, to);
    const corners = { early: corner(true), late: corner(false) };
    const curves = { nominal: sweep(nominal), early: sweep(Float64Array.from(corners.early)), late: sweep(Float64Array.from(corners.late)) };
    if (!curves.nominal || !curves.early || !curves.late) return undefined;
    const early = unityGainPoints(curves.early.vin, curves.early.vout);
    const late = unityGainPoints(curves.late.vin, curves.late.vout);
    return {
      key: memoKey(),
      nominal: unityGainPoints(curves.nominal.vin, curves.nominal.vout),
      vilMin: early?.vil,
      vihMax: late?.vih,
      curves: curves as ReceiverThresholds['curves'],
      corners,
    };
  });
  return found && { stage: stage.name, section: receiver.section, ...found };
}
