import type { Design } from '../design/model.js';
import type { SectionVariation } from '../models/tubeEquations.js';
import { logicThreshold } from '../solve/operatingPoint.js';
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
  /** The input level at which the old state stops existing (volts), found to 1 mV; undefined if it never does. */
  threshold: number | undefined;
  /** Asserted level minus threshold, signed towards the asserted side: the input's spare drive (volts). */
  triggerMargin: number | undefined;
}

/** The input's rise is taken in steps of at most this share of the way from quiet to asserted. */
const RISE_STEPS = 24;
/** The trigger threshold is found to this step (volts). */
const THRESHOLD_STEP = 1e-3;
/** Continuation steps allowed per trigger (each one Newton run of at most 50 iterations); past it the input counts as not switching. */
const MAX_RISE_SOLVES = 5000;

/**
 * Does a latch switch when its set or reset input is asserted? The input net is held by a
 * stiff source; the latch is put in the state it must leave (`leaves` high) at the quiet
 * level, and the input is then raised towards the asserted level by natural-parameter
 * continuation: each solve starts from the last with nothing pinned, so the latch stays
 * on the old state's branch for as long as that state exists, as it would while the input
 * rises slowly. A step after which the old state is gone (it reads low, or Newton found
 * no solution) is not trusted at once: Newton may have jumped off a branch that goes on.
 * It is taken again from the last level that held, at half the size, until the step is
 * below 1 mV: the branch ends there, at the trigger threshold. The trigger margin is the
 * asserted level's excess over it. If the old state survives to the asserted level, the
 * input is too weak.
 *
 * Example: a pentode latch whose set input is a third section on one side switches when
 * the set line rises past a few volts; with the set line asserted at 24 V the margin is
 * the difference.
 */
export function triggerMargin(design: Design, q: TriggerQuestion, variation?: ReadonlyMap<string, SectionVariation>): TriggerAnswer {
  const held = new HeldNet(design, q.input, variation);
  const line = logicThreshold(design, q.leaves);
  const start = held.solveAt(q.quiet, { hints: [{ net: q.leaves, high: true }] });
  if (start === undefined || start.nodes.get(q.leaves)! <= line) return { switches: true, threshold: q.quiet, triggerMargin: Math.abs(q.asserted - q.quiet) };
  const direction = Math.sign(q.asserted - q.quiet);
  const longest = Math.abs(q.asserted - q.quiet) / RISE_STEPS;
  let level = q.quiet;
  let last = start.x;
  let step = longest;
  for (let solves = 0; direction * (q.asserted - level) > 0 && solves < MAX_RISE_SOLVES; solves++) {
    const next = direction > 0 ? Math.min(q.asserted, level + step) : Math.max(q.asserted, level - step);
    const x = held.continueAt(next, last);
    if (x !== undefined && held.voltsOf(x, q.leaves) > line) {
      level = next;
      last = x;
      step = Math.min(longest, step * 2);
      continue;
    }
    step /= 2;
    if (step < THRESHOLD_STEP) {
      const threshold = level + direction * step;
      return { switches: true, threshold, triggerMargin: direction * (q.asserted - threshold) };
    }
  }
  return { switches: false, threshold: undefined, triggerMargin: undefined };
}
