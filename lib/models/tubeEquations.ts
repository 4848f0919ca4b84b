import type { TubeModel } from '../design/model.js';

/**
 * The tube equations, evaluated with their analytic partial derivatives for Newton's
 * method. Voltages are referred to the section's cathode. The numeric kernel
 * (`evaluateTube`) reads parameters from a Float64Array and writes results into another,
 * allocating nothing; `tubeCurrents` is the convenient form for tests and reports.
 *
 * Plate current:
 * - koren-triode (N. Koren, "Improved VT models for SPICE simulations", Glass Audio 1996):
 *   E1 = (Vak/kp)·softplus(kp·(1/mu + Vgk/sqrt(kvb + Vak²))), Ia = 2·E1^ex/kg1 for E1 > 0.
 * - koren-pentode (same source): E1 = (Vg2k/kp)·softplus(kp·(1/mu + Vg1k/Vg2k)),
 *   Ia = (2·E1^ex/kg1)·atan(Vak/kvb), screen Ig2 = max(0, Vg1k + Vg2k/mu)^ex/kg2.
 *   The published screen current ignores current division: when the plate bottoms, the
 *   electrons the plate no longer takes go to the screen instead (the usual picture of
 *   current division, e.g. K. R. Spangenberg, "Vacuum Tubes", 1948, from memory). We add
 *   that shortfall, (2·E1^ex/kg1)·(π/2 − atan(Vak/kvb)), to the screen, so the cathode
 *   current does not fall as the plate bottoms. Koren's screen term is multiplied by
 *   tanh(Vg2k / 1 V), so that no screen current flows with the screen at or below the
 *   cathode (the bare term flows whenever the grid is positive, wherever the screen is).
 * - child-langmuir: Ia = K·(Vgk + Vak/mu)^1.5 for a positive argument (the 3/2-power
 *   law), multiplied by tanh(Vak / 1 V) so that the plate current falls continuously to
 *   zero as Vak → 0 instead of flowing at zero or negative plate voltage.
 * Every kind: Ia = 0 for Vak ≤ 0; continuous; non-decreasing in Vgk and Vak.
 *
 * Grid conduction, every kind: Ig = (Vgk − vgamma)/rgi for Vgk > vgamma, else 0 (the
 * piecewise-linear law, unsmoothed; Newton's step limiting copes with its corner).
 *
 * Variation per section: the plate and screen currents are multiplied by the perveance
 * factor (spread, ageing) and the heater factor (low emission at a low heater voltage);
 * mu by the mu factor; the grid offset (contact
 * potential) is added to Vgk for the plate and screen currents, not for grid conduction.
 */

export const KIND_CODE = { 'koren-triode': 0, 'koren-pentode': 1, 'child-langmuir': 2 } as const;

/** Layout of one section's parameters in a Float64Array. */
export const P = {
  kind: 0,
  mu: 1,
  ex: 2,
  kg1: 3,
  kp: 4,
  kvb: 5,
  kg2: 6,
  k: 7,
  rgi: 8,
  vgamma: 9,
  perveance: 10,
  gridOffset: 11,
  size: 12,
} as const;

/** Layout of one evaluation's results: currents into the tube at each electrode, and their partials. */
export const R = {
  ia: 0,
  iaVg: 1,
  iaVa: 2,
  iaVs: 3,
  ig: 4,
  igVg: 5,
  is: 6,
  isVg: 7,
  isVa: 8,
  isVs: 9,
  size: 10,
} as const;

/** Where the tanh knee of the Child–Langmuir kind sits (volts). */
export const CHILD_LANGMUIR_KNEE = 1;

/** ln(1 + e^z) without overflow for large z or loss for very negative z. */
export function softplus(z: number): number {
  return z > 0 ? z + Math.log1p(Math.exp(-z)) : Math.log1p(Math.exp(z));
}

/** 1 / (1 + e^−z), the derivative of softplus. */
export function sigmoid(z: number): number {
  if (z >= 0) return 1 / (1 + Math.exp(-z));
  const e = Math.exp(z);
  return e / (1 + e);
}

/**
 * x^p for x > 0, as e^(p·ln x): under half the cost of Math.pow in V8, where the tube
 * equations are a third of a check's time. It differs from Math.pow by the logarithm's
 * rounding carried through the exponential, a few ulps for the currents of a working tube
 * and about 1e-13 relative for one cut off to 1e-300 A, far below anything a solve sees.
 */
function powerOf(x: number, p: number): number {
  return Math.exp(p * Math.log(x));
}

/** How a section differs from its type's nominal. */
export interface SectionVariation {
  /** Multiplies plate (and screen) current: tube-to-tube spread and ageing. */
  perveance: number;
  /** Emission at a low heater voltage, as one more factor on the plate (and screen) current (1 at nominal heater voltage). */
  heater?: number;
  /** Multiplies mu. */
  mu: number;
  /** Added to Vgk for the plate current (contact potential), volts. */
  gridOffset: number;
  /** A resistive cathode interface layer in series with the cathode (ohms; 0 for none). */
  cathodeOhms: number;
}

export const NOMINAL_VARIATION: SectionVariation = { perveance: 1, mu: 1, gridOffset: 0, cathodeOhms: 0 };

/** Writes the parameters of one section into `params` at `offset`. */
export function packSection(model: TubeModel, variation: SectionVariation, params: Float64Array, offset: number): void {
  params.fill(0, offset, offset + P.size);
  params[offset + P.kind] = KIND_CODE[model.kind];
  params[offset + P.mu] = model.mu * variation.mu;
  params[offset + P.rgi] = model.rgi;
  params[offset + P.vgamma] = model.vgamma;
  params[offset + P.perveance] = variation.perveance * (variation.heater ?? 1);
  params[offset + P.gridOffset] = variation.gridOffset;
  if (model.kind === 'child-langmuir') {
    params[offset + P.k] = model.k;
  } else {
    params[offset + P.ex] = model.ex;
    params[offset + P.kg1] = model.kg1;
    params[offset + P.kp] = model.kp;
    params[offset + P.kvb] = model.kvb;
    if (model.kind === 'koren-pentode') params[offset + P.kg2] = model.kg2;
  }
}

/**
 * The numeric kernel: currents into the tube at plate, grid and screen for voltages
 * referred to the cathode, with their partial derivatives, written to `out` at `o`.
 * Validates nothing and allocates nothing.
 */
export function evaluateTube(p: Float64Array, po: number, vgk: number, vak: number, vsk: number, out: Float64Array, o: number): void {
  const kind = p[po + P.kind]!;
  const mu = p[po + P.mu]!;
  const perveance = p[po + P.perveance]!;
  const vg = vgk + p[po + P.gridOffset]!;
  let ia = 0;
  let iaVg = 0;
  let iaVa = 0;
  let iaVs = 0;
  let is = 0;
  let isVg = 0;
  let isVa = 0;
  let isVs = 0;
  if (kind === 0) {
    if (vak > 0) {
      const kp = p[po + P.kp]!;
      const ex = p[po + P.ex]!;
      const s = Math.sqrt(p[po + P.kvb]! + vak * vak);
      const z = kp * (1 / mu + vg / s);
      // softplus(z) and its derivative sigmoid(z) from one exponential.
      const ez = Math.exp(-Math.abs(z));
      const sp = (z > 0 ? z : 0) + Math.log1p(ez);
      const e1 = (vak / kp) * sp;
      if (e1 > 0) {
        const sg = z >= 0 ? 1 / (1 + ez) : ez / (1 + ez);
        const scale = (2 * perveance) / p[po + P.kg1]!;
        const pw = powerOf(e1, ex - 1);
        ia = scale * pw * e1;
        const dIa = scale * ex * pw;
        iaVg = dIa * ((vak * sg) / s);
        iaVa = dIa * (sp / kp - (vak * vak * vg * sg) / (s * s * s));
      }
    }
  } else if (kind === 1) {
    if (vsk > 0) {
      const kp = p[po + P.kp]!;
      const ex = p[po + P.ex]!;
      const z = kp * (1 / mu + vg / vsk);
      const ez = Math.exp(-Math.abs(z));
      const sp = (z > 0 ? z : 0) + Math.log1p(ez);
      const e1 = (vsk / kp) * sp;
      if (e1 > 0) {
        const sg = z >= 0 ? 1 / (1 + ez) : ez / (1 + ez);
        const scale = (2 * perveance) / p[po + P.kg1]!;
        const pw = powerOf(e1, ex - 1);
        const a = scale * pw * e1;
        const dA = scale * ex * pw;
        const aVg = dA * sg;
        const aVs = dA * (sp / kp - (sg * vg) / vsk);
        const kvb = p[po + P.kvb]!;
        // Share of the space current the plate takes; the rest goes to the screen.
        let t = 0;
        let tVa = 0;
        if (vak > 0) {
          const x = vak / kvb;
          t = Math.atan(x);
          tVa = 1 / (kvb * (1 + x * x));
        }
        ia = a * t;
        iaVg = aVg * t;
        iaVs = aVs * t;
        iaVa = a * tVa;
        const rest = Math.PI / 2 - t;
        is = a * rest;
        isVg = aVg * rest;
        isVs = aVs * rest;
        isVa = -a * tVa;
      }
    }
    // Koren's screen law, gated by tanh(Vg2k / 1 V) like the Child–Langmuir plate: a screen
    // at or below the cathode collects nothing, whatever the grid does (the bare law lets a
    // positive grid drive current into a screen 800 V below the cathode, a source of power).
    const x = vg + vsk / mu;
    if (x > 0 && vsk > 0) {
      const ex = p[po + P.ex]!;
      const kg2 = p[po + P.kg2]!;
      const pw = powerOf(x, ex - 1);
      const law = (perveance * pw * x) / kg2;
      const d = (perveance * ex * pw) / kg2;
      const th = Math.tanh(vsk / CHILD_LANGMUIR_KNEE);
      const dTh = (1 - th * th) / CHILD_LANGMUIR_KNEE;
      is += law * th;
      isVg += d * th;
      isVs += (d / mu) * th + law * dTh;
    }
  } else {
    const x = vg + vak / mu;
    if (vak > 0 && x > 0) {
      const k = p[po + P.k]! * perveance;
      const root = Math.sqrt(x);
      const law = k * x * root;
      const dLaw = 1.5 * k * root;
      const th = Math.tanh(vak / CHILD_LANGMUIR_KNEE);
      const dTh = (1 - th * th) / CHILD_LANGMUIR_KNEE;
      ia = law * th;
      iaVg = dLaw * th;
      iaVa = (dLaw / mu) * th + law * dTh;
    }
  }
  let ig = 0;
  let igVg = 0;
  const over = vgk - p[po + P.vgamma]!;
  if (over > 0) {
    igVg = 1 / p[po + P.rgi]!;
    ig = over * igVg;
  }
  out[o + R.ia] = ia;
  out[o + R.iaVg] = iaVg;
  out[o + R.iaVa] = iaVa;
  out[o + R.iaVs] = iaVs;
  out[o + R.ig] = ig;
  out[o + R.igVg] = igVg;
  out[o + R.is] = is;
  out[o + R.isVg] = isVg;
  out[o + R.isVa] = isVa;
  out[o + R.isVs] = isVs;
}

export interface TubeCurrents {
  /** Currents into the tube at plate, grid and screen (amps); the cathode returns their sum. */
  plate: number;
  grid: number;
  screen: number;
  /** ∂/∂Vgk, ∂/∂Vak, ∂/∂Vg2k of the plate current (siemens). */
  dPlate: { vgk: number; vak: number; vg2k: number };
  dGrid: { vgk: number };
  dScreen: { vgk: number; vak: number; vg2k: number };
}

/**
 * The currents of one section of `model` at the given electrode voltages (referred to the
 * cathode). For pentodes `vg2k` is the screen voltage; triodes ignore it.
 *
 * Example: Koren's 12AU7 set at Vak = 250 V, Vgk = −8.5 V gives a plate current of about
 * 10.4 mA (the handbook says 10.5 mA).
 */
export function tubeCurrents(model: TubeModel, v: { vgk: number; vak: number; vg2k?: number }, variation: SectionVariation = NOMINAL_VARIATION): TubeCurrents {
  const p = new Float64Array(P.size);
  packSection(model, variation, p, 0);
  const r = new Float64Array(R.size);
  evaluateTube(p, 0, v.vgk, v.vak, v.vg2k ?? 0, r, 0);
  return {
    plate: r[R.ia]!,
    grid: r[R.ig]!,
    screen: r[R.is]!,
    dPlate: { vgk: r[R.iaVg]!, vak: r[R.iaVa]!, vg2k: r[R.iaVs]! },
    dGrid: { vgk: r[R.igVg]! },
    dScreen: { vgk: r[R.isVg]!, vak: r[R.isVa]!, vg2k: r[R.isVs]! },
  };
}
