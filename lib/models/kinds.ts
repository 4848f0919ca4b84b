import type { ModelKind } from '../design/model.js';

/** One fitted parameter of a model kind. */
export interface ModelParameter {
  name: string;
  /** What the parameter is, for help text and diagnostics. */
  meaning: string;
  /** 'perveance' is A/V^1.5; the Koren constants are plain numbers in his formulas' units. */
  unit: 'none' | 'perveance';
}

/**
 * The model kinds and the parameters each needs. The equations are in docs/PHYSICS.md
 * (N. Koren, "Improved VT models for SPICE simulations", Glass Audio, 1996, for the two
 * Koren kinds; the 3/2-power law of Child and Langmuir for the third).
 */
export const MODEL_KINDS: Record<ModelKind, { summary: string; parameters: ModelParameter[] }> = {
  'koren-triode': {
    summary: "Koren's triode: a smooth knee at cutoff and a fitted exponent",
    parameters: [
      { name: 'mu', meaning: 'amplification factor', unit: 'none' },
      { name: 'ex', meaning: 'exponent of the plate-current law', unit: 'none' },
      { name: 'kg1', meaning: 'plate-current scale (larger is less current)', unit: 'none' },
      { name: 'kp', meaning: 'sharpness of the cutoff knee', unit: 'none' },
      { name: 'kvb', meaning: 'knee voltage constant (V²)', unit: 'none' },
    ],
  },
  'koren-pentode': {
    summary: "Koren's pentode: plate current set by grid and screen, atan knee in plate voltage",
    parameters: [
      { name: 'mu', meaning: 'screen amplification factor', unit: 'none' },
      { name: 'ex', meaning: 'exponent of the plate-current law', unit: 'none' },
      { name: 'kg1', meaning: 'plate-current scale', unit: 'none' },
      { name: 'kg2', meaning: 'screen-current scale', unit: 'none' },
      { name: 'kp', meaning: 'sharpness of the cutoff knee', unit: 'none' },
      { name: 'kvb', meaning: 'plate knee voltage (V)', unit: 'none' },
    ],
  },
  'child-langmuir': {
    summary: 'the 3/2-power law, K·(Vgk + Vak/mu)^1.5',
    parameters: [
      { name: 'mu', meaning: 'amplification factor', unit: 'none' },
      { name: 'k', meaning: 'perveance (A/V^1.5)', unit: 'perveance' },
    ],
  },
};

export const MODEL_KIND_NAMES = Object.keys(MODEL_KINDS) as ModelKind[];

export function isModelKind(name: string): name is ModelKind {
  return Object.hasOwn(MODEL_KINDS, name);
}

/** Grid conduction defaults for every kind: a typical published grid input resistance, and 0 V onset. */
export const GRID_DEFAULTS = { rgi: 2000, vgamma: 0 };

/** Spread of a type that states none: ±25 %, the middle of the ±20–30 % new tubes show (common practice, no source). */
export const DEFAULT_SPREAD = 0.25;
