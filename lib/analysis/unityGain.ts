/**
 * The unity-gain points of a sampled inverting transfer curve: VIL, the lowest input where
 * the slope reaches −1, and VIH, the highest input where it leaves −1 again. These are the
 * standard definitions of the input thresholds for noise margins (D. A. Hodges and
 * H. G. Jackson, "Analysis and Design of Digital Integrated Circuits", McGraw-Hill).
 *
 * `vin` must increase strictly; the slope between samples is taken as the slope at their
 * midpoint, and the −1 crossings are interpolated linearly between midpoints. Returns
 * undefined when the slope never reaches −1: a stage with a gain below one cannot restore
 * logic levels and has no noise margin.
 *
 * Example: for vout = 12 − 10·tanh((vin − 5)/2) the slope is −5·sech²(·), and VIL, VIH
 * are 5 ∓ 2·acosh(√5) ≈ 1.91 V and 8.09 V.
 */
export function unityGainPoints(vin: ArrayLike<number>, vout: ArrayLike<number>): { vil: number; vih: number } | undefined {
  const n = vin.length;
  if (n < 3 || vout.length !== n) return undefined;
  const mid: number[] = [];
  const slope: number[] = [];
  for (let i = 0; i + 1 < n; i++) {
    const dx = vin[i + 1]! - vin[i]!;
    mid.push((vin[i]! + vin[i + 1]!) / 2);
    slope.push((vout[i + 1]! - vout[i]!) / dx);
  }
  const crossing = (i: number) => {
    // Slope = −1 between midpoints i and i+1.
    const s0 = slope[i]! + 1;
    const s1 = slope[i + 1]! + 1;
    const t = s0 === s1 ? 0.5 : s0 / (s0 - s1);
    return mid[i]! + t * (mid[i + 1]! - mid[i]!);
  };
  let vil: number | undefined;
  let vih: number | undefined;
  if (slope[0]! <= -1) vil = vin[0]!;
  for (let i = 0; i + 1 < slope.length; i++) {
    if (vil === undefined && slope[i]! > -1 && slope[i + 1]! <= -1) vil = crossing(i);
    if (slope[i]! <= -1 && slope[i + 1]! > -1) vih = crossing(i);
  }
  if (vil === undefined) return undefined;
  if (vih === undefined || vih < vil) vih = slope[slope.length - 1]! <= -1 ? vin[n - 1]! : vil;
  return { vil, vih };
}
