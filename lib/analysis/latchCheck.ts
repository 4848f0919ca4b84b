import type { Receiver } from '../graph/stageGraph.js';
import type { LevelChain } from './levelChain.js';
import { localDesign } from './localDesign.js';
import type { Region } from './region.js';
import { receiverThresholds, type ReceiverThresholds } from './receiverThresholds.js';
import { staticNoiseMargin, type ButterflyResult, type TransferCurve } from './staticNoiseMargin.js';
import { triggerMargin } from './switching.js';
import type { Witness } from './cornerSearch.js';

/** Whether one set or reset input of a latch switches it. */
export interface LatchInput {
  /** The input net. */
  input: string;
  /** The latch net that input pulls low. */
  pulls: string;
  /** True when, with the input at its weakest asserted level, the state it must end no longer exists. */
  switches: boolean;
  /** The input level at which the old state stops existing (volts). */
  threshold: number | undefined;
  /** The weakest asserted level minus that threshold (volts). */
  triggerMargin: number | undefined;
  /** The weakest asserted level used. */
  asserted: number;
  /** Why it was not judged (an input that never goes high), when it was not. */
  note?: string;
}

export interface LatchResult {
  nets: [string, string];
  /** Both states exist at every corner: shown by the bounds or by the corners of the whole design (see `basis`). */
  holds: boolean;
  /**
   * How `holds` was decided: `bounds`, the chained worst-case levels clear the other
   * stage's thresholds and the worst butterfly is bistable; `corners`, the bounds could
   * not show it but every corner of the whole design keeps both states; `witness`, a
   * corner where a state does not exist (`witness`); `undecided`, the bounds cannot
   * show it and the corners searched lost no state, but not every corner was solved.
   */
  basis: 'bounds' | 'corners' | 'witness' | 'undecided';
  /** The corner where a state does not exist, when `basis` is `witness`. */
  witness: Witness | undefined;
  /** Corners of the whole design solved to decide it (0 when the bounds did). */
  corners: number;
  /** Largest-square static noise margin (Seevinck et al.), nominal and at the worst combination of corners. */
  snm: { nominal: number; worst: number };
  /** The butterflies (for drawing): nominal and worst, and the two nominal curves (second net against first, first against second). */
  butterfly: { nominal: ButterflyResult; worst: ButterflyResult; curves: [TransferCurve, TransferCurve] } | undefined;
  inputs: LatchInput[];
  reasons: string[];
}

/**
 * Checks one latch: whether it holds a state in worst case, its static noise margin, and
 * whether each of its set and reset inputs switches it at the input's weakest asserted
 * level, with the trigger margin.
 *
 * The butterfly is drawn from the two receiving stages' transfer curves (each with its
 * own divider and loading, from the local solves); its worst SNM is the smallest over
 * every pair of each curve's extreme corners (`ReceiverThresholds.extremes`: shifted
 * furthest either way, and the lowest VIL and highest VIH). The trigger is found on the
 * latch's own region (both stages, their dividers and what they feed, every other net held)
 * solved whole, with the parameters at the vertex that makes the pulled net's low level
 * highest, by continuation of the rising input (see `triggerMargin`).
 */
export function latchCheck(chain: LevelChain, latch: [string, string]): LatchResult {
  const [a, b] = latch;
  const reasons: string[] = [];
  const receiver = (from: string, to: string): Receiver | undefined => chain.index.graph.nets.find((n) => n.name === from)?.receivers.find((r) => r.output === to);
  const rab = receiver(a, b);
  const rba = receiver(b, a);
  const t1 = rab && receiverThresholds(chain, a, rab);
  const t2 = rba && receiverThresholds(chain, b, rba);
  let butterfly: LatchResult['butterfly'];
  let snm = { nominal: 0, worst: 0 };
  if (t1 && t2) {
    // The butterflies depend on the two curves alone: latches of one kind share them.
    const found = chain.memo(`butterfly|${t1.key}|${t2.key}`, () => {
      const nominal = staticNoiseMargin(t1.curves.nominal, t2.curves.nominal);
      let worst = nominal;
      for (const c1 of t1.extremes) {
        for (const c2 of t2.extremes) {
          const r = staticNoiseMargin(c1, c2);
          if (worst.bistable && (!r.bistable || r.snm < worst.snm)) worst = r;
        }
      }
      return { nominal, worst };
    });
    butterfly = { ...found, curves: [t1.curves.nominal, t2.curves.nominal] };
    snm = { nominal: found.nominal.snm, worst: found.worst.bistable ? found.worst.snm : 0 };
  } else reasons.push('the transfer curves of its two stages could not be swept');
  const restores = (net: string, t: ReceiverThresholds | undefined) => {
    const l = chain.levels.get(net)!;
    if (!l.canHigh || !l.canLow) {
      reasons.push(`${net} can never be ${l.canHigh ? 'low' : 'high'}`);
      return false;
    }
    if (!t || t.vihMax === undefined || t.vilMin === undefined) {
      reasons.push(`the stage ${net} drives has a gain below 1: it cannot restore levels`);
      return false;
    }
    let ok = true;
    if (l.highWorst < t.vihMax) {
      reasons.push(`${net}'s worst high level ${l.highWorst.toFixed(2)} V is below ${t.stage}'s VIH ${t.vihMax.toFixed(2)} V`);
      ok = false;
    }
    if (l.lowWorst > t.vilMin) {
      reasons.push(`${net}'s worst low level ${l.lowWorst.toFixed(2)} V is above ${t.stage}'s VIL ${t.vilMin.toFixed(2)} V`);
      ok = false;
    }
    return ok;
  };
  const levelsHold = [restores(a, t1), restores(b, t2)].every(Boolean);
  if (butterfly && !butterfly.worst.bistable) reasons.push('at its worst corners the two transfer curves cross only once: no second state');
  const holds = levelsHold && snm.worst > 0;
  const inputs = [...latchInputs(chain, b, a), ...latchInputs(chain, a, b)];
  return { nets: [a, b], holds, basis: holds ? 'bounds' : 'undecided', witness: undefined, corners: 0, snm, butterfly, inputs, reasons };
}

/** The set or reset inputs that pull `pulled` low (the other drivers of its stage than the one `partner` feeds), each checked. */
function latchInputs(chain: LevelChain, pulled: string, partner: string): LatchInput[] {
  const net = chain.nets.get(pulled)!;
  if (net.polarity !== 'inverting') return [];
  const out: LatchInput[] = [];
  net.drivers.forEach((_, i) => {
    const feeders = net.feeders[i]!;
    if (feeders.includes(partner) || feeders.length !== 1) return;
    const input = feeders[0]!;
    const l = chain.levels.get(input)!;
    if (!l.canHigh) {
      out.push({ input, pulls: pulled, switches: false, threshold: undefined, triggerMargin: undefined, asserted: NaN, note: `${input} never goes high` });
      return;
    }
    out.push(checkTrigger(chain, [partner, pulled], pulled, i, input));
  });
  return out;
}

function checkTrigger(chain: LevelChain, latch: [string, string], pulled: string, driver: number, input: string): LatchInput {
  const net = chain.nets.get(pulled)!;
  const partner = chain.nets.get(latch[0])!;
  const l = chain.levels.get(input)!;
  const asserted = l.highWorst;
  const quiet = l.canLow ? l.lowWorst : chain.railMin;
  const corner = chain.solveCase({ net: pulled, on: driver });
  const levels = new Map<string, number>();
  let region: Region | undefined;
  const latchRegion = () => {
    if (region) return region;
    region = chain.regionWith(latch).region;
    const others = new Set([...partner.feeders.flat(), ...net.feeders.flat()]);
    for (const b of region.boundaries) {
      const bl = chain.levels.get(b)!;
      levels.set(b, others.has(b) && bl.canLow ? bl.lowWorst : bl.canLow ? bl.lowNominal : bl.highNominal);
    }
    return region;
  };
  // The two nets' classes and the input fix the question; failing that, the latch's region, the levels
  // around it, the input and the corner do: latches alike share the answer.
  const byClass = `trigger-class|${chain.classOf(latch[0])}|${chain.classOf(pulled)}|${partner.region.boundaries.indexOf(pulled)}|${net.region.boundaries.indexOf(latch[0])}|${net.driverPositions[driver]}`;
  const byValue = () => {
    const r = latchRegion();
    return `trigger|${chain.kindOf(r)}|${net.kind}|${net.driverPositions[driver]}|${r.boundaries.indexOf(input)}|${r.boundaries.map((b) => levels.get(b)).join(',')}|${corner.vertex?.join(',')}|${asserted}|${quiet}`;
  };
  const found = chain.memoTwice(byClass, byValue, () => {
    const region = latchRegion();
    const vertex = corner.vertex;
    // The corner's own boundary levels are left out: the latch region holds its boundaries itself.
    const parameters = net.parameters.filter((p) => p.kind !== 'level');
    const values = vertex ? parameters.map((p) => vertex[net.parameters.indexOf(p)]!) : undefined;
    const local = localDesign(chain.design, region, levels, vertex ? parameters : undefined, values);
    const answer = triggerMargin(local.design, { latch, input, leaves: pulled, quiet, asserted }, local.variation);
    return { switches: answer.switches, threshold: answer.threshold, triggerMargin: answer.triggerMargin };
  });
  return { input, pulls: pulled, asserted, ...found };
}
