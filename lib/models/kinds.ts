import type { ModelKind } from '../design/model.js';
import type { ValueRange } from '../design/evaluate.js';

/** One fitted parameter of a model kind. */
export interface ModelParameter {
  name: string;
  /** What the parameter is, for help text and diagnostics. */
  meaning: string;
  /** 'perveance' is A/V^1.5; the Koren constants are plain numbers in his formulas' units. */
  unit: 'none' | 'perveance';
  /**
   * Where the parameter has a physical meaning. The bounds are wide (decades around every
   * published fit and every library entry) and are there to turn nonsense away before it
   * reaches the solver: a mu below 0.5 or an exponent outside 1–3 describes no tube
   * (the 3/2-power law sits in the middle; common practice, no source).
   */
  range: ValueRange;
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
      { name: 'mu', meaning: 'amplification factor', unit: 'none', range: { min: 0.5, max: 1000, unit: '' } },
      { name: 'ex', meaning: 'exponent of the plate-current law', unit: 'none', range: { min: 1, max: 3, unit: '' } },
      { name: 'kg1', meaning: 'plate-current scale; larger is less current', unit: 'none', range: { min: 1, max: 1e6, unit: '' } },
      { name: 'kp', meaning: 'sharpness of the cutoff knee', unit: 'none', range: { min: 1, max: 1e4, unit: '' } },
      { name: 'kvb', meaning: 'knee voltage constant, V²', unit: 'none', range: { min: 1e-3, max: 1e7, unit: '' } },
    ],
  },
  'koren-pentode': {
    summary: "Koren's pentode: plate current set by grid and screen, atan knee in plate voltage",
    parameters: [
      { name: 'mu', meaning: 'screen amplification factor', unit: 'none', range: { min: 0.5, max: 1000, unit: '' } },
      { name: 'ex', meaning: 'exponent of the plate-current law', unit: 'none', range: { min: 1, max: 3, unit: '' } },
      { name: 'kg1', meaning: 'plate-current scale', unit: 'none', range: { min: 1, max: 1e6, unit: '' } },
      { name: 'kg2', meaning: 'screen-current scale', unit: 'none', range: { min: 1, max: 1e7, unit: '' } },
      { name: 'kp', meaning: 'sharpness of the cutoff knee', unit: 'none', range: { min: 1, max: 1e4, unit: '' } },
      { name: 'kvb', meaning: 'plate knee voltage', unit: 'none', range: { min: 1e-3, max: 1e4, unit: 'V' } },
    ],
  },
  'child-langmuir': {
    summary: 'the 3/2-power law, K·(Vgk + Vak/mu)^1.5',
    parameters: [
      { name: 'mu', meaning: 'amplification factor', unit: 'none', range: { min: 0.5, max: 1000, unit: '' } },
      { name: 'k', meaning: 'perveance, A/V^1.5', unit: 'perveance', range: { min: 1e-7, max: 1, unit: 'A/V^1.5' } },
    ],
  },
};

export const MODEL_KIND_NAMES = Object.keys(MODEL_KINDS) as ModelKind[];

export function isModelKind(name: string): name is ModelKind {
  return Object.hasOwn(MODEL_KINDS, name);
}

/** Grid conduction defaults for every kind: a typical published grid input resistance, and 0 V onset. */
export const GRID_DEFAULTS = { rgi: 2000, vgamma: 0 };

/**
 * Where the grid constants have a meaning, for every kind. Grid current really starts a
 * fraction of a volt either side of the cathode (contact potential and the electrons'
 * initial velocities; common practice, no source), so an onset beyond ±2 V describes no
 * tube, and a negative one is what lets a grid sit below every rail: bounding it bounds
 * how far (see `solve`'s span check). A conducting grid's input resistance runs from
 * hundreds of ohms to tens of kilohms; the range allows decades either side.
 */
export const GRID_RANGES: { rgi: ValueRange; vgamma: ValueRange } = {
  rgi: { min: 10, max: 1e8, unit: 'Ω' },
  vgamma: { min: -2, max: 2, unit: 'V' },
};

/** Spread of a type that states none: ±25 %, the middle of the ±20–30 % new tubes show (common practice, no source). */
export const DEFAULT_SPREAD = 0.25;
