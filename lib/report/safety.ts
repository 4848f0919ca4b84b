import type { Design } from '../design/model.js';

/** The usual extra-low-voltage limit for DC touch safety, above which the cautions are shown (common practice, no source). */
export const SAFETY_VOLTS = 60;

/**
 * The cautions a report must carry when any rail or driven input of the design exceeds
 * 60 V from ground (either polarity, tolerance included); none otherwise.
 */
export function safetyCautions(design: Design): string[] {
  const high = [
    ...design.rails.map((r) => ({ name: r.name, v: Math.abs(r.volts) * (1 + r.tol) })),
    ...design.parts.filter((p) => p.type === 'drive').map((p) => ({ name: p.name, v: Math.abs(p.volts) * (1 + p.tol) })),
  ].filter((x) => x.v > SAFETY_VOLTS);
  if (high.length === 0) return [];
  const names = high.map((x) => `${x.name} (up to ${Number(x.v.toPrecision(3))} V)`).join(', ');
  return [
    `CAUTION: ${names} exceed${high.length === 1 ? 's' : ''} ${SAFETY_VOLTS} V. These voltages can kill, and capacitors hold charge after power is off.`,
    'Discharge every capacitor through a resistor before touching the circuit; work with one hand, with insulated tools, away from ground.',
    'This tool checks logic margins, not safety: follow your local electrical codes, and have work on mains-powered or high-voltage equipment done or checked by a licensed person.',
  ];
}
