import type { TubeModel } from '../design/model.js';

/** A model without its design-specific fields (name, span, library). */
export type ModelParameters = TubeModel extends infer M ? (M extends TubeModel ? Omit<M, 'name' | 'span' | 'library'> : never) : never;

/** Maximum ratings of one section, as the handbook states them. */
export interface TubeRatings {
  plateWatts: number;
  screenWatts?: number;
  heaterVolts: number;
  heaterAmps: number;
  /** Largest heater–cathode voltage (either polarity). */
  heaterCathodeVolts: number;
}

/** One registered tube type: its model for one section, its ratings, and where the numbers came from. */
export interface LibraryEntry {
  designation: string;
  description: string;
  sectionsPerEnvelope: number;
  model: ModelParameters;
  ratings: TubeRatings;
  /** Where the model parameters and ratings come from. */
  provenance: string;
  /** Plate voltages (V) over which the fit is trusted. */
  trustedPlateVolts: [number, number];
  /** Known weaknesses of the fit, stated rather than tuned away. */
  caveats?: string;
}

const KOREN = 'N. Koren, "Improved VT models for SPICE simulations", Glass Audio 1996 (parameters from memory)';
const RCA = 'ratings: RCA Receiving Tube Manual (from memory)';

/**
 * The tube library. Registered type designations only, no brand names. Issue #3 extends it
 * with pentodes and computer-rated types; the entries here are Koren's published triode sets.
 */
export const TUBE_LIBRARY: readonly LibraryEntry[] = [
  {
    designation: '12AX7',
    description: 'high-mu twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 100, ex: 1.4, kg1: 1060, kp: 600, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 1.2, heaterVolts: 12.6, heaterAmps: 0.15, heaterCathodeVolts: 180 },
    provenance: `${KOREN}; ${RCA}`,
    trustedPlateVolts: [100, 300],
    caveats: 'the fit misses handbook points badly near 100 V and below',
  },
  {
    designation: '12AU7',
    description: 'medium-mu twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 21.5, ex: 1.3, kg1: 1180, kp: 84, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 2.75, heaterVolts: 12.6, heaterAmps: 0.15, heaterCathodeVolts: 200 },
    provenance: `${KOREN}; ${RCA}`,
    trustedPlateVolts: [50, 300],
  },
  {
    designation: '12AT7',
    description: 'high-transconductance twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 60, ex: 1.35, kg1: 460, kp: 300, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 2.5, heaterVolts: 12.6, heaterAmps: 0.15, heaterCathodeVolts: 90 },
    provenance: `${KOREN}; ${RCA}`,
    trustedPlateVolts: [100, 300],
  },
  {
    designation: '6DJ8',
    description: 'frame-grid twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 28, ex: 1.3, kg1: 330, kp: 320, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 1.8, heaterVolts: 6.3, heaterAmps: 0.365, heaterCathodeVolts: 100 },
    provenance: `${KOREN}; ratings from memory of the type's data sheet`,
    trustedPlateVolts: [50, 200],
  },
];

/** The library entry of a type designation, exact match. */
export function findLibraryEntry(designation: string): LibraryEntry | undefined {
  return TUBE_LIBRARY.find((e) => e.designation === designation);
}
