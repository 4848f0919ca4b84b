import { GRID_RANGES } from '../models/kinds.js';
import { P } from '../models/tubeEquations.js';
import type { Circuit } from './circuit.js';

/** Slack for rounding in the span check (volts): far above Newton's tolerance, far below any level that matters. */
const ROUNDING_VOLTS = 0.01;

/** The interval of voltages a DC solution of a circuit can take (volts). */
export interface VoltageSpan {
  low: number;
  high: number;
}

/**
 * The span every node of a DC solution must lie in: from the lowest to the highest fixed
 * voltage in force (ground, rails and drives at the values this solve uses, sources
 * behind a resistance included), widened by what the circuit's own offsets can add.
 *
 * Why it holds: resistors, diodes and the plate and screen currents are passive — each
 * carries current only from its higher terminal to its lower one — so by Kirchhoff's
 * current law an unknown node cannot be the strict extreme of its neighbourhood (the
 * maximum principle of a resistive network). The one active element is grid conduction
 * with a negative onset (vgamma < 0): it draws current from grid to cathode while the grid
 * sits up to |vgamma| below the cathode, so it can push a grid that far below, and a
 * cathode that far above, the span. The widening is |vgamma| of the most negative onset
 * times the longest chain of such sections a node can sit behind (a grid that is also
 * another section's cathode), plus 10 mV for rounding. Validation keeps every vgamma
 * within ±2 V, so for a usual design the widening is at most 2.01 V.
 */
export function voltageSpan(c: Circuit): VoltageSpan {
  let low = 0;
  let high = 0;
  for (const v of c.fixedVolts) {
    low = Math.min(low, v);
    high = Math.max(high, v);
  }
  let widen = widening.get(c);
  if (widen === undefined) widening.set(c, (widen = ROUNDING_VOLTS + offsetChain(c) * activeOnset(c)));
  return { low: low - widen, high: high + widen };
}

/** The widening per circuit: it depends on topology and the sections' onsets, which corners never rewrite. */
const widening = new WeakMap<Circuit, number>();

/** True when every unknown of `x` lies inside the circuit's span: the allocation-free form of `nodesOutsideSpan` for hot loops. */
export function withinSpan(c: Circuit, x: Float64Array): boolean {
  const { low, high } = voltageSpan(c);
  for (let i = 0; i < c.n; i++) if (!(x[i]! >= low && x[i]! <= high)) return false;
  return true;
}

/**
 * |vgamma| of the most negative grid-current onset among the circuit's sections (0 when
 * none is negative), never more than the most negative onset validation allows: a model
 * handed to the solver without validation does not widen the span with its own nonsense.
 */
function activeOnset(c: Circuit): number {
  let most = 0;
  for (let t = 0; t < c.tA.length; t++) most = Math.max(most, -c.tubeParams[t * P.size + P.vgamma]!);
  return Math.min(most, -GRID_RANGES.vgamma.min);
}

/** The longest chain of sections, grid of one to cathode of the next, that offsets can add along (1 for the usual design). */
function offsetChain(c: Circuit): number {
  const cathodes = new Set<number>();
  for (let t = 0; t < c.tK.length; t++) if (c.tK[t]! >= 0) cathodes.add(c.tK[t]!);
  let chained = 0;
  for (let t = 0; t < c.tG.length; t++) if (cathodes.has(c.tG[t]!)) chained++;
  return 1 + chained;
}

/**
 * The span a simulation in time must stay in: the DC span over every set of fixed
 * voltages the run used (`fixedStates`, the inputs' waveforms included), widened by its
 * own width. In time a capacitor can lift or drop a node by as much as the step across
 * its other terminal, and no step within the span is larger than the span (a plate that
 * falls from B+ to the bottom drags a clamped grid below the bias rail by at most that
 * much: the counter demo's grids do it). A diode–capacitor ladder that pumps charge (a
 * voltage multiplier) could go further; tube logic has none, so a node past this bound
 * means the integration went wrong.
 */
export function transientSpan(c: Circuit, fixedStates: readonly Float64Array[]): VoltageSpan {
  let low = Infinity;
  let high = -Infinity;
  const saved = Float64Array.from(c.fixedVolts);
  for (const f of fixedStates) {
    c.fixedVolts.set(f);
    const s = voltageSpan(c);
    low = Math.min(low, s.low);
    high = Math.max(high, s.high);
  }
  c.fixedVolts.set(saved);
  const width = high - low;
  return { low: low - width, high: high + width };
}

/**
 * The unknowns of `x` that lie outside `span`, worst first, as `name at V` for a message;
 * empty for a sane solution. Call it with the span of the values in force for this solve.
 */
export function nodesOutsideSpan(c: Circuit, x: Float64Array, span: VoltageSpan = voltageSpan(c)): string[] {
  const out: { name: string; beyond: number; volts: number }[] = [];
  for (let i = 0; i < c.n; i++) {
    const v = x[i]!;
    const beyond = Number.isNaN(v) ? Infinity : Math.max(span.low - v, v - span.high);
    if (beyond > 0) out.push({ name: c.nodeNames[i]!, beyond, volts: v });
  }
  out.sort((a, b) => b.beyond - a.beyond);
  return out.map((o) => `${o.name} at ${Number.isFinite(o.volts) ? o.volts.toFixed(2) + ' V' : String(o.volts)}`);
}
