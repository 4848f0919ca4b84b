import type { Design } from '../design/model.js';
import type { SectionVariation } from '../models/tubeEquations.js';
import type { StateHint } from '../solve/operatingPoint.js';
import { HeldNet } from './heldNet.js';
import type { TransferCurve } from './staticNoiseMargin.js';

export interface SweepOptions {
  /** The net to sweep: held by a stiff source, whatever its own driver would do. */
  input: string;
  /** The net whose voltage is recorded. */
  output: string;
  from: number;
  to: number;
  /** Number of points, ends included (≥ 3). */
  points: number;
  /** Sections' emission and interface, where they are not nominal. */
  variation?: ReadonlyMap<string, SectionVariation>;
  /** Latch states to start the first point from (as `solve --hint`); hints on the two swept nets are left out. */
  hints?: StateHint[];
}

/**
 * The DC transfer curve from one net to another: the input net is held by a stiff source
 * stepped from `from` to `to`, overriding its own driver; at each step the whole rest of
 * the design is solved (loading, dividers and clamped grids included), each solve starting
 * from the last and reusing the same factorisation. Holding a latch's net this way opens
 * its loop, so the curve is that of one half of the latch, loaded exactly as in the latch.
 * Returns undefined if a step does not converge.
 *
 * Example: sweeping `q` of a latch and recording `nq` gives the falling curve of the `nq`
 * stage, high while `q` is low and low once `q` is high.
 */
export function sweepTransfer(design: Design, sweep: SweepOptions): TransferCurve | undefined {
  const held = new HeldNet(design, sweep.input, sweep.variation);
  const hints = sweep.hints?.filter((h) => h.net !== sweep.input && h.net !== sweep.output);
  const vin: number[] = [];
  const vout: number[] = [];
  let start: Float64Array | undefined;
  for (let k = 0; k < sweep.points; k++) {
    const v = sweep.from + ((sweep.to - sweep.from) * k) / (sweep.points - 1);
    // After the first point each solve starts from the last, so no latch is re-pinned.
    const op = held.solveAt(v, start ? { start } : hints ? { hints } : {});
    if (!op) return undefined;
    vin.push(v);
    vout.push(op.nodes.get(sweep.output)!);
    start = op.x;
  }
  return { vin, vout };
}
