import type { Design } from '../design/model.js';
import type { SectionVariation } from '../models/tubeEquations.js';
import { logicThreshold, type OperatingPoint } from '../solve/operatingPoint.js';
import { HeldNet } from './heldNet.js';

export interface TriggerQuestion {
  /** The latch's two nets. */
  latch: [string, string];
  /** The net of the set or reset input, which is held at each level tried. */
  input: string;
  /** The state the latch must leave when the input is asserted: this net starts high and must end low. */
  leaves: string;
  /** The input's level at rest and when asserted (volts). */
  quiet: number;
  asserted: number;
}

export interface TriggerAnswer {
  /** True when, at the asserted level, the state to be left no longer exists. */
  switches: boolean;
  /** The input level at which the old state stops existing (volts), found by bisection to 1 mV; undefined if it never does. */
  threshold: number | undefined;
  /** Asserted level minus threshold, signed towards the asserted side: the input's spare drive (volts). */
  triggerMargin: number | undefined;
}

/** Steps of the input's rise from its quiet to its asserted level. */
const RISE_STEPS = 24;

/**
 * Does a latch switch when its set or reset input is asserted? The input net is held by a
 * stiff source; the latch is put in the state it must leave (`leaves` high) at the quiet
 * level, and the input is then raised step by step towards the asserted level, each solve
 * starting from the last with nothing pinned, so the latch stays on the old state's branch
 * for as long as that state exists, as it would while the input rises slowly. Where the
 * branch ends (the old state reads low, or Newton finds no solution near it) the level is
 * refined by bisection, each probe again continued from the last level that held: the
 * trigger threshold; the trigger margin is the asserted level's excess over it. If the
 * old state survives to the asserted level, the input is too weak.
 *
 * Continuation rather than a fresh pinned start at each level: near the threshold a
 * pinned start can fail to converge on a state that barely exists, which would be
 * mistaken for a state that holds.
 *
 * Example: a pentode latch whose set input is a third section on one side switches when
 * the set line rises past a few volts; with the set line asserted at 24 V the margin is
 * the difference.
 */
export function triggerMargin(design: Design, q: TriggerQuestion, variation?: ReadonlyMap<string, SectionVariation>): TriggerAnswer {
  const held = new HeldNet(design, q.input, variation);
  const old = (op: OperatingPoint | undefined) => op !== undefined && op.nodes.get(q.leaves)! > logicThreshold(design, q.leaves);
  const start = held.solveAt(q.quiet, { hints: [{ net: q.leaves, high: true }] });
  if (!old(start)) return { switches: true, threshold: q.quiet, triggerMargin: Math.abs(q.asserted - q.quiet) };
  let holds = q.quiet;
  let last = start!;
  for (let k = 1; k <= RISE_STEPS; k++) {
    const level = q.quiet + ((q.asserted - q.quiet) * k) / RISE_STEPS;
    const op = held.solveAt(level, { start: last.x });
    if (!old(op)) {
      let gone = level;
      while (Math.abs(gone - holds) > 1e-3) {
        const mid = (holds + gone) / 2;
        const probe = held.solveAt(mid, { start: last.x });
        if (old(probe)) {
          holds = mid;
          last = probe!;
        } else gone = mid;
      }
      const threshold = (holds + gone) / 2;
      return { switches: true, threshold, triggerMargin: Math.sign(q.asserted - q.quiet) * (q.asserted - threshold) };
    }
    holds = level;
    last = op!;
  }
  return { switches: false, threshold: undefined, triggerMargin: undefined };
}
