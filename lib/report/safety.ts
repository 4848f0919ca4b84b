import type { Design } from '../design/model.js';

/** The usual extra-low-voltage limit for DC touch safety, above which the cautions are shown (common practice, no source). */
export const SAFETY_VOLTS = 60;

/** How the first caution begins, in text output; a page's caution block says it in its heading instead. */
export const CAUTION_PREFIX = 'CAUTION: ';

/** A level a run applies from outside the design: a waveform's extreme on a drive, a level a step sets. */
export interface AppliedLevel {
  name: string;
  volts: number;
}

/**
 * The cautions a report must carry when any rail or driven input of the design exceeds
 * 60 V from ground (either polarity, tolerance included), or a level the run applies does
 * (`applied`: a pulse's waveforms, a step's `set`); none otherwise.
 *
 * Example: a design with `rail neg = -75 V tol 5 %` names `neg (down to −78.8 V)`.
 */
/** The levels a supply sweep sets each rail to, for the cautions: a rail swept past its tolerance reaches them. */
export function sweptLevels(axes: readonly { rail: string; values: readonly number[] }[]): AppliedLevel[] {
  return axes.flatMap((a) => a.values.map((volts) => ({ name: a.rail, volts })));
}

export function safetyCautions(design: Design, applied: readonly AppliedLevel[] = []): string[] {
  const extreme = (v: number, tol: number) => v * (1 + tol);
  const high = [
    ...design.rails.map((r) => ({ name: r.name, v: extreme(r.volts, r.tol) })),
    ...design.parts.filter((p) => p.type === 'drive').map((p) => ({ name: p.name, v: extreme(p.volts, p.tol) })),
    ...applied.map((a) => ({ name: a.name, v: a.volts })),
  ].filter((x) => Math.abs(x.v) > SAFETY_VOLTS);
  if (high.length === 0) return [];
  // One entry per name, its largest magnitude: a drive and its waveform are one input.
  const byName = new Map<string, number>();
  for (const x of high) if (!byName.has(x.name) || Math.abs(x.v) > Math.abs(byName.get(x.name)!)) byName.set(x.name, x.v);
  const names = [...byName].map(([name, v]) => `${name} (${v > 0 ? 'up to' : 'down to'} ${v > 0 ? '' : '−'}${Number(Math.abs(v).toPrecision(3))} V)`).join(', ');
  return [
    `${CAUTION_PREFIX}${names} exceed${byName.size === 1 ? 's' : ''} ${SAFETY_VOLTS} V. These voltages can kill, and capacitors hold charge after power is off.`,
    'Discharge every capacitor through a resistor before touching the circuit; work with one hand, with insulated tools, away from ground.',
    'This tool checks logic margins, not safety: follow your local electrical codes, and have work on mains-powered or high-voltage equipment done or checked by a licensed person.',
  ];
}
