import { evaluateTube, P, R } from '../models/tubeEquations.js';
import type { CaseResult, ChainNet, LevelChain, SectionGrid } from './levelChain.js';

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
  // Found once per class of nets, by driver index; named for this net.
  const found = chain.memo(`cutoff|${chain.classOf(net)}`, () => {
    const grids = gridsAt(chain, n, chain.solveCase({ net, on: undefined }));
    let worst: (Omit<GridMargin, 'section'> & { driver: number }) | undefined;
    n.driverPositions.forEach((t, i) => {
      const g = grids?.[t];
      if (!g || g.cutoff === undefined) return;
      const m = { driver: i, volts: g.cutoff - g.vgk, vgk: g.vgk, reference: g.cutoff };
      if (!worst || m.volts < worst.volts) worst = m;
    });
    return worst;
  });
  return found && { section: n.drivers[found.driver]!, volts: found.volts, vgk: found.vgk, reference: found.reference };
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
  const found = chain.memo(`drive|${chain.classOf(net)}`, () => {
    let worst: (Omit<GridMargin, 'section'> & { driver: number }) | undefined;
    for (const c of chain.casesOf(n).low) {
      const g = gridsAt(chain, n, chain.solveCase(c))?.[n.driverPositions[c.on!]!];
      if (!g) continue;
      const m = { driver: c.on!, volts: g.openVgk, vgk: g.vgk, reference: 0 };
      if (!worst || m.volts < worst.volts) worst = m;
    }
    return worst;
  });
  return found && { section: n.drivers[found.driver]!, volts: found.volts, vgk: found.vgk, reference: found.reference };
}

/** Every section's grid at a case's vertex, solved once and kept with the case (shared by every net of the same kind). */
function gridsAt(chain: LevelChain, n: ChainNet, r: CaseResult): SectionGrid[] | undefined {
  if (r.grids) return r.grids;
  const { problem } = chain.problem(n.region, undefined, n.kind);
  if (!r.vertex || !problem.solve(r.vertex)) return undefined;
  const c = problem.circuit;
  r.grids = [];
  for (let t = 0; t < c.tA.length; t++) {
    const vk = problem.volts(c.tK[t]!);
    const g = c.tG[t]!;
    const vak = problem.volts(c.tA[t]!) - vk;
    const vg2k = c.hasScreen[t] ? problem.volts(c.tS[t]!) - vk : 0;
    let open = problem.volts(g);
    if (g >= 0) {
      let sum = 0;
      let weighted = 0;
      for (let e = 0; e < c.gA.length; e++) {
        const other = c.gA[e] === g ? c.gB[e]! : c.gB[e] === g ? c.gA[e]! : undefined;
        if (other === undefined) continue;
        sum += c.gS[e]!;
        weighted += c.gS[e]! * problem.volts(other);
      }
      if (sum > 0) open = weighted / sum;
    }
    r.grids.push({ vgk: problem.volts(g) - vk, cutoff: cutoffGrid(c.tubeParams, t * P.size, vak, vg2k), openVgk: open - vk });
  }
  return r.grids;
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
