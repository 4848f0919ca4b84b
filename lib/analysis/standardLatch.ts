import { loadDesign } from '../design/load.js';
import type { LibraryEntry } from '../models/library.js';
import { NOMINAL_VARIATION } from '../models/tubeEquations.js';
import { solveOperatingPoint } from '../solve/operatingPoint.js';

/**
 * A library type at logic voltages: the levels of one standard latch built of it, so that
 * types can be compared where logic runs them rather than where their handbook curves
 * are drawn. The latch: two stages cross-coupled, 24 V B+, −12 V bias; pentodes and beam
 * tubes with 33 k loads, 220 k / 220 k dividers and the screen at B+; triodes with 100 k
 * loads and 330 k / 330 k dividers (issue #20's standard).
 */
export const STANDARD_LATCH = {
  bplus: 24,
  bias: -12,
  pentode: { load: 33e3, series: 220e3, pulldown: 220e3 },
  triode: { load: 100e3, series: 330e3, pulldown: 330e3 },
} as const;

/** The plate voltages of the standard latch's two sides: the section cut off (high) and the one conducting (low). */
export interface LatchLevels {
  high: number;
  low: number;
}

export interface StandardLatchFigures {
  /**
   * Both sections at the weak end of the type's spread (perveance × (1 − spread)), nominal,
   * and the strong end; undefined where the latch has no state with q high (its two
   * sides settle at one level: it does not latch).
   */
  weak: LatchLevels | undefined;
  nominal: LatchLevels | undefined;
  strong: LatchLevels | undefined;
  /** The plate voltages the latch runs its tubes at, against the range the type's fit is trusted over. */
  outsideTrusted: boolean;
}

/** The standard latch of a type as design text. */
export function standardLatchText(entry: LibraryEntry): string {
  const pentode = entry.model.kind === 'koren-pentode';
  const v = pentode ? STANDARD_LATCH.pentode : STANDARD_LATCH.triode;
  const stage = (out: string, from: string) =>
    `stage ${out} { tube "${entry.designation}"; load ${v.load} to bp;${pentode ? ' screen bp;' : ''} input ${from} series ${v.series} pulldown ${v.pulldown} to bias }`;
  return [`title "standard latch of ${entry.designation}"`, `rail bp = ${STANDARD_LATCH.bplus} V`, `rail bias = ${STANDARD_LATCH.bias} V`, stage('q', 'nq'), stage('nq', 'q'), ''].join('\n');
}

/**
 * Solves a type's standard latch with `q` high, at nominal and at both ends of the type's
 * spread (both sections alike). A corner whose solve does not converge, or where q does
 * not stay at least 1 V above nq, has no levels: the latch does not hold there.
 *
 * Example: `standardLatch(findLibraryEntry('12AU7')!)` gives its latch's plate voltages,
 * the conducting side's a few volts and the cut-off side's most of the way to B+.
 */
export function standardLatch(entry: LibraryEntry): StandardLatchFigures | undefined {
  // Undefined only for a type the latch cannot be written with (a library entry always can).
  const loaded = loadDesign('standard-latch.tube', standardLatchText(entry));
  if (!loaded.design) return undefined;
  const design = loaded.design;
  const sections = design.parts.filter((p) => p.type === 'tube').map((p) => p.name);
  const levelsAt = (perveance: number): LatchLevels | undefined => {
    const variation = new Map(sections.map((s) => [s, { ...NOMINAL_VARIATION, perveance }]));
    const op = solveOperatingPoint(design, { variation, hints: [{ net: 'q', high: true }] });
    if (!('nodes' in op) || !op.converged) return undefined;
    const high = op.nodes.get('q')!;
    const low = op.nodes.get('nq')!;
    return high - low >= 1 ? { high, low } : undefined;
  };
  const spread = entry.model.spread;
  const weak = levelsAt(1 - spread);
  const nominal = levelsAt(1);
  const strong = levelsAt(1 + spread);
  const [from, to] = entry.trustedPlateVolts;
  const outsideTrusted = [weak, nominal, strong].some((l) => l !== undefined && (l.low < from || l.high > to || l.high < from));
  return { weak, nominal, strong, outsideTrusted };
}
