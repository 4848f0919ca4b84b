import { evaluateTube, P, R } from '../models/tubeEquations.js';
import type { LevelChain } from './levelChain.js';
import type { LocalProblem } from './localProblem.js';

/** Cutoff is where the plate current falls to this fraction of its value at Vgk = 0, at the same plate and screen voltages. */
export const CUTOFF_FRACTION = 0.01;

/** One section's grid-side margin and where it comes from. */
export interface GridMargin {
  section: string;
  /** Margin in volts: positive is safe. */
  volts: number;
  /** The grid voltage against the cathode at the worst vertex. */
  vgk: number;
  /** The reference it is measured against: the cutoff grid voltage, or the cathode (0 V). */
  reference: number;
}

/**
 * The cutoff margin of a net's drivers while the net is high: how far each OFF grid sits
 * below the grid voltage at which its section is cut off, at the vertex that makes the
 * high level lowest. Cutoff is the grid voltage where the plate current is 1 % of what the
 * section draws at Vgk = 0 with the same plate and screen voltages (a stated definition; a
 * ratio, so the perveance spread does not move it). The smallest over the drivers.
 */
export function cutoffMargin(chain: LevelChain, net: string): GridMargin | undefined {
  const n = chain.nets.get(net)!;
  if (n.polarity !== 'inverting' || !chain.levels.get(net)!.canHigh) return undefined;
  const r = chain.solveCase({ net, on: undefined });
  if (!r.vertex) return undefined;
  const { problem } = chain.problem(n.region);
  if (!problem.solve(r.vertex)) return undefined;
  let worst: GridMargin | undefined;
  n.driverPositions.forEach((t, i) => {
    const v = electrodeVolts(problem, t);
    const cutoff = cutoffGrid(problem.circuit.tubeParams, t * P.size, v.vak, v.vg2k);
    if (cutoff === undefined) return;
    const m = { section: n.drivers[i]!, volts: cutoff - v.vgk, vgk: v.vgk, reference: cutoff };
    if (!worst || m.volts < worst.volts) worst = m;
  });
  return worst;
}

/**
 * The drive margin of a net's drivers while the net is low: how far the conducting
 * section's input divider would push its grid above the cathode if grid current did not
 * clamp it (the voltage its resistors would set with the grid's own current removed, the
 * nodes around it held), at the vertex that makes the low level highest. Negative: the
 * grid is never driven to the cathode, and the ON current depends on the tube. The
 * smallest over the drivers that can conduct.
 */
export function driveMargin(chain: LevelChain, net: string): GridMargin | undefined {
  const n = chain.nets.get(net)!;
  if (n.polarity !== 'inverting') return undefined;
  const { problem } = chain.problem(n.region);
  let worst: GridMargin | undefined;
  for (const c of chain.casesOf(n).low) {
    const r = chain.solveCase(c);
    if (!r.vertex || !problem.solve(r.vertex)) continue;
    const t = n.driverPositions[c.on!]!;
    const c0 = problem.circuit;
    const g = c0.tG[t]!;
    const vk = problem.volts(c0.tK[t]!);
    let open = problem.volts(g);
    if (g >= 0) {
      let sum = 0;
      let weighted = 0;
      for (let e = 0; e < c0.gA.length; e++) {
        const other = c0.gA[e] === g ? c0.gB[e]! : c0.gB[e] === g ? c0.gA[e]! : undefined;
        if (other === undefined) continue;
        sum += c0.gS[e]!;
        weighted += c0.gS[e]! * problem.volts(other);
      }
      if (sum > 0) open = weighted / sum;
    }
    const m = { section: n.drivers[c.on!]!, volts: open - vk, vgk: problem.volts(g) - vk, reference: 0 };
    if (!worst || m.volts < worst.volts) worst = m;
  }
  return worst;
}

function electrodeVolts(problem: LocalProblem, t: number): { vgk: number; vak: number; vg2k: number } {
  const c = problem.circuit;
  const vk = problem.volts(c.tK[t]!);
  return { vgk: problem.volts(c.tG[t]!) - vk, vak: problem.volts(c.tA[t]!) - vk, vg2k: c.hasScreen[t] ? problem.volts(c.tS[t]!) - vk : 0 };
}

/** The grid voltage where the plate current is `CUTOFF_FRACTION` of that at Vgk = 0, by bisection (the current rises with Vgk); undefined when the section draws nothing at Vgk = 0. */
export function cutoffGrid(params: Float64Array, offset: number, vak: number, vg2k: number): number | undefined {
  const out = new Float64Array(R.size);
  const ia = (vgk: number) => {
    evaluateTube(params, offset, vgk, vak, vg2k, out, 0);
    return out[R.ia]!;
  };
  const target = CUTOFF_FRACTION * ia(0);
  if (!(target > 0)) return undefined;
  let lo = -1000;
  let hi = 0;
  if (ia(lo) > target) return lo;
  for (let k = 0; k < 60 && hi - lo > 1e-6; k++) {
    const mid = (lo + hi) / 2;
    if (ia(mid) > target) hi = mid;
    else lo = mid;
  }
  return (lo + hi) / 2;
}
