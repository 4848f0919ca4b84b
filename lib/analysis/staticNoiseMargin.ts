import { highest } from '../lists.js';

/** A sampled transfer curve: output against input, inputs strictly increasing. */
export interface TransferCurve {
  vin: ArrayLike<number>;
  vout: ArrayLike<number>;
}

export interface ButterflyResult {
  /** True when the curves cross three times: two stable states and the metastable point between. */
  bistable: boolean;
  /** Side of the largest square that fits in each lobe of the butterfly (volts); 0 for a pair that is not bistable. */
  lobes: [number, number];
  /** The static noise margin: the smaller lobe's square; 0 when the pair holds no state. */
  snm: number;
  /** The largest square of each lobe, for drawing: lower-left corner and side. */
  squares: [{ x: number; y: number; side: number }, { x: number; y: number; side: number }];
}

const ROOT2 = Math.SQRT2;

/**
 * The static noise margin of a cross-coupled pair of inverting stages: the side of the
 * largest square that fits inside the smaller lobe of the butterfly the two transfer
 * curves make (E. Seevinck, F. J. List, J. Lohstroh, "Static-noise margin analysis of MOS
 * SRAM cells", IEEE J. Solid-State Circuits, 1987), computed in coordinates rotated by 45°.
 *
 * Stage 1 maps x to y = f1(x); stage 2 maps y to x = f2(y), drawn mirrored in the same
 * plane. In the rotated coordinates u = (x − y)/√2, w = (x + y)/√2 both curves are
 * single-valued in u (they fall monotonically), and a square between them has its
 * diagonal along w: the largest square of a lobe has side max |w1(u) − w2(u)| / √2 over
 * the lobe. Both curves are interpolated linearly between samples, on the union of their
 * sample positions in u. The lobes run from the metastable crossing to the stable states
 * on either side, where the curves meet again; a pair whose curves do not close both lobes
 * (a gain below one) holds no state, and its SNM is 0 with `bistable` false.
 *
 * Example: two ideal (step) inverters switching at 12 V between 2 V and 22 V give an SNM
 * of 10 V.
 */
export function staticNoiseMargin(stage1: TransferCurve, stage2: TransferCurve): ButterflyResult {
  // Curve 1: points (x, f1(x)). Curve 2: points (f2(y), y).
  const c1 = rotate(stage1.vin, stage1.vout, false);
  const c2 = rotate(stage2.vin, stage2.vout, true);
  const us = [...new Set([...c1.u, ...c2.u])].filter((u) => u >= Math.max(c1.u[0]!, c2.u[0]!) && u <= Math.min(c1.u[c1.u.length - 1]!, c2.u[c2.u.length - 1]!)).sort((a, b) => a - b);
  const d = us.map((u) => interpolate(c1, u) - interpolate(c2, u));
  const scale = Math.max(1e-30, highest(d.map(Math.abs)));
  const sign = (i: number) => (Math.abs(d[i]!) <= 1e-9 * scale ? 0 : d[i]! > 0 ? 1 : -1);
  // The metastable point: the middle one of the places where the curves change order.
  const changes: number[] = [];
  let last = 0;
  for (let i = 0; i < d.length; i++) {
    const sg = sign(i);
    if (sg !== 0 && last !== 0 && sg !== last) changes.push(i);
    if (sg !== 0) last = sg;
  }
  const none = { x: 0, y: 0, side: 0 };
  const notBistable: ButterflyResult = { bistable: false, lobes: [0, 0], snm: 0, squares: [none, none] };
  if (changes.length === 0) return notBistable;
  const m = changes[Math.floor((changes.length - 1) / 2)]!;
  // Each lobe runs from the metastable point to the stable state where the curves meet
  // again (or touch at the end of the curves); a run that never closes is no lobe.
  const lobe = (from: number, step: 1 | -1): { best: number; at: number } | undefined => {
    let i = from;
    while (i >= 0 && i < d.length && sign(i) === 0) i += step;
    if (i < 0 || i >= d.length) return undefined;
    const sg = sign(i);
    let best = 0;
    let at = us[i]!;
    for (; i >= 0 && i < d.length; i += step) {
      const here = sign(i);
      if (here !== sg) return { best, at };
      if (Math.abs(d[i]!) > best) ((best = Math.abs(d[i]!)), (at = us[i]!));
    }
    return undefined;
  };
  const a = lobe(m - 1, -1);
  const b = lobe(m, 1);
  if (!a || !b) return notBistable;
  const bestPos = a.best;
  const bestNeg = b.best;
  const atPos = a.at;
  const atNeg = b.at;
  const square = (u: number) => {
    const w1 = interpolate(c1, u);
    const w2 = interpolate(c2, u);
    const side = Math.abs(w1 - w2) / ROOT2;
    // The diagonal runs from curve 2 to curve 1 along w at this u; the lower-left corner is its lower end.
    const wLow = Math.min(w1, w2);
    return { x: (u + wLow) / ROOT2, y: (wLow - u) / ROOT2, side };
  };
  const lobes: [number, number] = [bestPos / ROOT2, bestNeg / ROOT2];
  return { bistable: true, lobes, snm: Math.min(...lobes), squares: [square(atPos), square(atNeg)] };
}

interface Rotated {
  u: number[];
  w: number[];
}

function rotate(vin: ArrayLike<number>, vout: ArrayLike<number>, mirrored: boolean): Rotated {
  const pts: [number, number][] = [];
  for (let i = 0; i < vin.length; i++) {
    const x = mirrored ? vout[i]! : vin[i]!;
    const y = mirrored ? vin[i]! : vout[i]!;
    pts.push([(x - y) / ROOT2, (x + y) / ROOT2]);
  }
  pts.sort((a, b) => a[0] - b[0]);
  return { u: pts.map((p) => p[0]), w: pts.map((p) => p[1]) };
}

function interpolate(c: Rotated, u: number): number {
  const { u: us, w } = c;
  let lo = 0;
  let hi = us.length - 1;
  if (u <= us[0]!) return w[0]!;
  if (u >= us[hi]!) return w[hi]!;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (us[mid]! <= u) lo = mid;
    else hi = mid;
  }
  const span = us[hi]! - us[lo]!;
  const t = span === 0 ? 0 : (u - us[lo]!) / span;
  return w[lo]! + t * (w[hi]! - w[lo]!);
}
