import type { Design } from '../design/model.js';
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

/**
 * Does a latch switch when its set or reset input is asserted? The input net is held by a
 * stiff source at a level; the latch starts in the state it must leave (`leaves` high) and
 * is released. If that state still holds, the input was too weak. Bisection between the
 * quiet and the asserted level finds the level at which the old state stops existing: the
 * trigger threshold, and with it the trigger margin, the asserted level's excess over it.
 *
 * Example: a pentode latch whose set input is a third section on one side switches when
 * the set line rises past a few volts; with the set line asserted at 24 V the margin is
 * the difference.
 */
export function triggerMargin(design: Design, q: TriggerQuestion): TriggerAnswer {
  const held = new HeldNet(design, q.input);
  const oldStateHolds = (level: number): boolean => {
    const op = held.solveAt(level, { hints: [{ net: q.leaves, high: true }] });
    return op === undefined || op.hints[0]!.held;
  };
  if (oldStateHolds(q.asserted)) return { switches: false, threshold: undefined, triggerMargin: undefined };
  let holds = q.quiet;
  let gone = q.asserted;
  if (!oldStateHolds(holds)) return { switches: true, threshold: q.quiet, triggerMargin: Math.abs(q.asserted - q.quiet) };
  while (Math.abs(gone - holds) > 1e-3) {
    const mid = (holds + gone) / 2;
    if (oldStateHolds(mid)) holds = mid;
    else gone = mid;
  }
  const threshold = (holds + gone) / 2;
  return { switches: true, threshold, triggerMargin: Math.sign(q.asserted - q.quiet) * (q.asserted - threshold) };
}
