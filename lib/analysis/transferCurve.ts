import type { Design } from '../design/model.js';
import { buildStageGraph } from '../graph/stageGraph.js';
import { solveOperatingPoint, type OperatingPoint } from '../solve/operatingPoint.js';
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
  // The stiff source takes whatever the net's own sections and load would give it; they stay
  // in place, so their grids still load (and clamp) the nets that drive them.
  const cut: Design = { ...design, parts: [...design.parts, { type: 'drive', name: `sweep:${sweep.input}`, node: sweep.input, volts: sweep.from, tol: 0, sourceOhms: 0 }] };
  const graph = buildStageGraph(cut);
  const vin: number[] = [];
  const vout: number[] = [];
  const first = solveOperatingPoint(cut, { graph });
  if (!('nodes' in first)) return undefined;
  let previous: OperatingPoint = first;
  const terminal = previous.system.circuit.terminalOf.get(sweep.input)!;
  const fixed = -1 - terminal;
  for (let k = 0; k < sweep.points; k++) {
    const v = sweep.from + ((sweep.to - sweep.from) * k) / (sweep.points - 1);
    previous.system.circuit.fixedVolts[fixed] = v;
    const op = solveOperatingPoint(cut, { graph, system: previous.system, start: previous.x });
    if (!('nodes' in op) || !op.converged) return undefined;
    vin.push(v);
    vout.push(op.nodes.get(sweep.output)!);
    previous = op;
  }
  return { vin, vout };
}
