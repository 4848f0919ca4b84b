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

/** Interelectrode capacitances of one section (farads): grid–cathode (input), grid–plate, plate–cathode (output). */
export interface Interelectrode {
  gk: number;
  gp: number;
  pk: number;
}

/**
 * Interelectrode capacitances for a type the library does not hold: the order of a small
 * miniature triode section (common practice, no source).
 */
export const DEFAULT_INTERELECTRODE: Interelectrode = { gk: 2e-12, gp: 1.5e-12, pk: 0.5e-12 };

/** One registered tube type: its model for one section, its ratings, and where the numbers came from. */
export interface LibraryEntry {
  designation: string;
  description: string;
  sectionsPerEnvelope: number;
  model: ModelParameters;
  ratings: TubeRatings;
  /** Interelectrode capacitances, without shield (handbook figures, from memory; pentodes' input and output as the handbook gives them, to all other electrodes). */
  capacitance: Interelectrode;
  /** Where the model parameters and ratings come from. */
  provenance: string;
  /** Plate voltages (V) over which the fit is trusted. */
  trustedPlateVolts: [number, number];
  /** Known weaknesses of the fit, stated rather than tuned away. */
  caveats?: string;
}

const KOREN = 'N. Koren, "Improved VT models for SPICE simulations", Glass Audio 1996 (parameters from memory)';
const RCA = 'ratings and interelectrode capacitances: RCA Receiving Tube Manual (from memory)';

/**
 * The tube library. Registered type designations only, no brand names. Each entry says
 * where its numbers come from and the plate voltages it is trusted over; at the 12–60 V
 * where logic often runs, published fits disagree by several times, so a builder should
 * fit their own tubes.
 */
export const TUBE_LIBRARY: readonly LibraryEntry[] = [
  {
    designation: '12AX7',
    description: 'high-mu twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 100, ex: 1.4, kg1: 1060, kp: 600, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 1.2, heaterVolts: 12.6, heaterAmps: 0.15, heaterCathodeVolts: 180 },
    capacitance: { gk: 1.6e-12, gp: 1.7e-12, pk: 0.46e-12 },
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
    capacitance: { gk: 1.6e-12, gp: 1.5e-12, pk: 0.5e-12 },
    provenance: `${KOREN}; ${RCA}`,
    trustedPlateVolts: [50, 300],
  },
  {
    designation: '12AT7',
    description: 'high-transconductance twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 60, ex: 1.35, kg1: 460, kp: 300, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 2.5, heaterVolts: 12.6, heaterAmps: 0.15, heaterCathodeVolts: 90 },
    capacitance: { gk: 2.2e-12, gp: 1.5e-12, pk: 0.5e-12 },
    provenance: `${KOREN}; ${RCA}`,
    trustedPlateVolts: [100, 300],
    caveats: "Koren's set gives 12.9 mA at the handbook point 250 V / −2 V, where the handbook says 10 mA: 28 % high",
  },
  {
    designation: '6DJ8',
    description: 'frame-grid twin triode',
    sectionsPerEnvelope: 2,
    model: { kind: 'koren-triode', mu: 28, ex: 1.3, kg1: 330, kp: 320, kvb: 300, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 1.8, heaterVolts: 6.3, heaterAmps: 0.365, heaterCathodeVolts: 100 },
    capacitance: { gk: 3.3e-12, gp: 1.4e-12, pk: 1.8e-12 },
    provenance: `${KOREN}; ratings and capacitances from memory of the type's data sheet`,
    trustedPlateVolts: [50, 200],
  },
  {
    designation: '6SN7',
    description: 'medium-mu twin triode (octal)',
    sectionsPerEnvelope: 2,
    model: { kind: 'child-langmuir', mu: 20, k: 9.43e-4, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 3.5, heaterVolts: 6.3, heaterAmps: 0.6, heaterCathodeVolts: 200 },
    capacitance: { gk: 2.8e-12, gp: 4.0e-12, pk: 0.8e-12 },
    provenance: 'fitted to one handbook point, 250 V / −8 V / 9 mA with mu 20 (RCA Receiving Tube Manual, from memory): K = 9 mA / (−8 + 250/20)^1.5; capacitances from the same manual',
    trustedPlateVolts: [90, 300],
    caveats: 'a 3/2-power law through one point; its transconductance there is 15 % above the handbook figure',
  },
  {
    designation: '6CG7',
    description: 'medium-mu twin triode (miniature 6SN7)',
    sectionsPerEnvelope: 2,
    model: { kind: 'child-langmuir', mu: 20, k: 9.43e-4, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 3.5, heaterVolts: 6.3, heaterAmps: 0.6, heaterCathodeVolts: 200 },
    capacitance: { gk: 2.3e-12, gp: 3.8e-12, pk: 0.7e-12 },
    provenance: 'the 6SN7 fit: the handbook gives the 6CG7 the same characteristics (RCA Receiving Tube Manual, from memory), and its own capacitances',
    trustedPlateVolts: [90, 300],
    caveats: 'a 3/2-power law through one point; its transconductance there is 15 % above the handbook figure',
  },
  {
    designation: '6AU6',
    description: 'sharp-cutoff small pentode',
    sectionsPerEnvelope: 1,
    model: { kind: 'koren-pentode', mu: 36, ex: 1.35, kg1: 2744, kg2: 2103, kp: 120, kvb: 0.729, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 3.5, screenWatts: 0.75, heaterVolts: 6.3, heaterAmps: 0.3, heaterCathodeVolts: 200 },
    capacitance: { gk: 5.5e-12, gp: 0.0035e-12, pk: 5.0e-12 },
    provenance:
      'kg1 and kvb fitted for logic use (tools/fit-logic-pentode.ts) to the bench figure that a small pentode driven hard at 24 V looks like about 3 kΩ plate to cathode, the ON plates of two latches at 5.5 V and 1.7 V (common practice, no source); ' +
      'mu 36 and the screen-to-plate current ratio 0.41 from the handbook (RCA Receiving Tube Manual, from memory); ex 1.35 as in Koren\'s pentode sets; capacitances from the same manual',
    trustedPlateVolts: [2, 60],
    caveats: 'fitted at logic voltages only, with a knee (kvb) far sharper than a real pentode\'s: it misses the handbook point (250 V plate, 150 V screen, −1 V grid) badly',
  },
  {
    designation: '6CB6',
    description: 'sharp-cutoff small pentode',
    sectionsPerEnvelope: 1,
    model: { kind: 'koren-pentode', mu: 35, ex: 1.35, kg1: 968, kg2: 1163, kp: 120, kvb: 15, rgi: 2000, vgamma: 0, spread: 0.25 },
    ratings: { plateWatts: 2, screenWatts: 0.5, heaterVolts: 6.3, heaterAmps: 0.3, heaterCathodeVolts: 200 },
    capacitance: { gk: 6.3e-12, gp: 0.02e-12, pk: 1.9e-12 },
    provenance:
      'fitted to the handbook point 200 V plate, 150 V screen, −2.2 V grid: 9.5 mA plate, 2.8 mA screen (RCA Receiving Tube Manual, from memory); mu 35 assumed; ex 1.35 as in Koren\'s pentode sets; capacitances from the same manual',
    trustedPlateVolts: [100, 300],
    caveats: 'not fitted below 100 V, where logic runs: fit your own tubes (tubemargin fit) before trusting margins there',
  },
];

/** The library entry of a type designation, exact match. */
export function findLibraryEntry(designation: string): LibraryEntry | undefined {
  return TUBE_LIBRARY.find((e) => e.designation === designation);
}

/**
 * How a design's tube type is named in messages: its own name and the library type it
 * copies ("LOGIC_PENTODE (6AU6)"), or the designation once where the design uses the
 * library type directly ("6AU6", not "6AU6 (6AU6)").
 */
export function typeLabel(name: string, designation: string): string {
  return name === designation ? name : `${name} (${designation})`;
}
