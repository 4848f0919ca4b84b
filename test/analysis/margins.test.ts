import { describe, expect, it } from 'vitest';
import { staticNoiseMargin, unityGainPoints } from '../../lib/index.js';

const sample = (f: (x: number) => number, from: number, to: number, n: number) => {
  const vin = Array.from({ length: n }, (_, i) => from + ((to - from) * i) / (n - 1));
  return { vin, vout: vin.map(f) };
};

/** An ideal inverter: VOH below its threshold, VOL above it (a step a nanovolt wide). */
const step = (vol: number, voh: number, threshold: number) => ({ vin: [0, threshold - 1e-9, threshold + 1e-9, 30], vout: [voh, voh, vol, vol] });

describe('unity-gain points of a transfer curve (Hodges & Jackson)', () => {
  it('match the closed form for vout = A − B·tanh((vin − c)/w): vin = c ∓ w·acosh(√(B/w))', () => {
    const [a, b, c, w] = [12, 10, 5, 2];
    const { vin, vout } = sample((x) => a - b * Math.tanh((x - c) / w), -5, 15, 20001);
    const got = unityGainPoints(vin, vout)!;
    const off = w * Math.acosh(Math.sqrt(b / w));
    expect(got.vil).toBeCloseTo(c - off, 4);
    expect(got.vih).toBeCloseTo(c + off, 4);
  });

  it('give none for a stage whose gain never reaches one', () => {
    const { vin, vout } = sample((x) => 10 - 0.5 * x, 0, 10, 101);
    expect(unityGainPoints(vin, vout)).toBeUndefined();
  });
});

describe('static noise margin by the largest square in the butterfly (Seevinck, List, Lohstroh 1987)', () => {
  it('is the closed form for ideal step inverters: min(threshold − VOL, VOH − threshold) per lobe', () => {
    const sym = staticNoiseMargin(step(2, 22, 12), step(2, 22, 12));
    expect(sym.snm).toBeCloseTo(10, 6);
    // Asymmetric pair: lobes min(m1 − VOL2, VOH1 − m2) = 8 and min(VOH2 − m1, m2 − VOL1) = 7.
    const asym = staticNoiseMargin(step(2, 22, 12), step(4, 20, 9));
    expect([...asym.lobes].sort()).toEqual([expect.closeTo(7, 6), expect.closeTo(8, 6)]);
    expect(asym.snm).toBeCloseTo(7, 6);
  });

  it('equals VIL − VOL for symmetric piecewise-linear inverters with gain above one', () => {
    // VOL 0, VOH 24, falling linearly from 8 V to 16 V (gain 3): the square spans [VOL, VIL] × [VIH, VOH].
    const pwl = (x: number) => (x <= 8 ? 24 : x >= 16 ? 0 : 24 - 3 * (x - 8));
    const curve = { vin: [0, 8, 16, 24], vout: [0, 8, 16, 24].map(pwl) };
    const r = staticNoiseMargin(curve, curve);
    expect(r.lobes[0]).toBeCloseTo(8, 9);
    expect(r.lobes[1]).toBeCloseTo(8, 9);
    // One lobe's square is [VOL, VIL] × [VIH, VOH] = [0, 8] × [16, 24], the other its mirror image.
    const corners = r.squares.map((q) => [q.x, q.y, q.side].map((v) => Math.round(v * 1e6) / 1e6)).sort();
    expect(corners).toEqual([
      [0, 16, 8],
      [16, 0, 8],
    ]);
  });

  it('is zero, and the pair not bistable, when the curves cross only once (gain below one)', () => {
    const weak = sample((x) => 12 - 0.5 * (x - 12), 0, 24, 241);
    const r = staticNoiseMargin(weak, weak);
    expect(r.bistable).toBe(false);
    expect(r.snm).toBe(0);
  });
});
