import type { Design, Rail } from '../design/model.js';

/** Toleranced rails split at most: 2^3 boxes, each a whole run of the level chain. */
export const MAX_SPLIT_RAILS = 3;

/**
 * The design over boxes of its rails' ranges: each toleranced rail's range cut in two
 * halves, one design per combination of halves (its rail at the middle of the half, with
 * the tolerance that reaches the half's ends). The boxes cover the whole range, so a
 * bound that holds on every box holds on the design.
 *
 * Why: a net's worst level and the threshold of the stage it feeds are bounded apart,
 * each at the end of a shared rail that is worst for it alone; where the rail moves both
 * the same way (a higher plate supply lifts a low level and the receiver's VIL with it),
 * the margin bound counts the rail's effect twice. On a half of the range each bound
 * moves half as far. Where more rails have tolerances than `MAX_SPLIT_RAILS`, the widest
 * ranges (in volts) are split and the rest kept whole.
 *
 * Example: `rail hv = 150 V tol 5 %` and `rail neg = -75 V tol 5 %` give four designs,
 * hv at 146.25 V ± 3.75 V or 153.75 V ± 3.75 V, each with neg at −73.125 V or −76.875 V
 * ± 1.875 V.
 */
export function railBoxes<D extends Pick<Design, 'rails'>>(design: D): D[] {
  const split = design.rails
    .filter((r) => r.tol > 0 && r.volts !== 0)
    .sort((a, b) => Math.abs(b.volts * b.tol) - Math.abs(a.volts * a.tol))
    .slice(0, MAX_SPLIT_RAILS);
  if (split.length === 0) return [];
  const boxes: D[] = [];
  for (let k = 0; k < 2 ** split.length; k++) {
    const half = new Map(split.map((r, i) => [r, (k >> i) & 1] as const));
    boxes.push({ ...design, rails: design.rails.map((r) => (half.has(r) ? halfOf(r, half.get(r)!) : r)) });
  }
  return boxes;
}

/** The lower (0) or upper (1) half of a rail's range, as a rail of its own. */
function halfOf(r: Rail, which: number): Rail {
  const reach = Math.abs(r.volts) * r.tol;
  const middle = r.volts + (which === 0 ? -reach / 2 : reach / 2);
  return { ...r, volts: middle, tol: reach / 2 / Math.abs(middle) };
}
