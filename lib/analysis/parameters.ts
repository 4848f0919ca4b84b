import type { Design, Part } from '../design/model.js';
import { NOMINAL_VARIATION, type SectionVariation } from '../models/tubeEquations.js';

/** One toleranced quantity of a design: a resistor's value, a rail's or drive's voltage, a section's perveance. */
export interface DesignParameter {
  /** Stable identifier: `R:name`, `V:rail`, `D:drive`, `P:section`. */
  id: string;
  kind: 'resistor' | 'rail' | 'drive' | 'perveance';
  /** The part or rail it belongs to. */
  target: string;
  nominal: number;
  /** The tolerance band's ends (nominal · (1 ∓ tol)); equal to the nominal for an exact value. */
  low: number;
  high: number;
}

/**
 * Every toleranced quantity of a design, in a stable order: resistors (ohms ± tol), rails
 * and drives (volts ± tol, the band in the direction of the magnitude), and each tube
 * section's perveance factor (1 ± its type's spread). Quantities with no tolerance are
 * left out.
 *
 * Example: `rail bp = 24 V tol 5 %` gives `{ id: 'V:bp', low: 22.8, high: 25.2 }`.
 */
export function designParameters(design: Design): DesignParameter[] {
  const out: DesignParameter[] = [];
  const band = (id: string, kind: DesignParameter['kind'], target: string, nominal: number, tol: number) => {
    if (tol <= 0) return;
    const a = nominal * (1 - tol);
    const b = nominal * (1 + tol);
    out.push({ id, kind, target, nominal, low: Math.min(a, b), high: Math.max(a, b) });
  };
  for (const r of design.rails) band(`V:${r.name}`, 'rail', r.name, r.volts, r.tol);
  const spread = new Map(design.models.map((m) => [m.name, m.spread]));
  for (const p of design.parts) {
    if (p.type === 'resistor') band(`R:${p.name}`, 'resistor', p.name, p.ohms, p.tol);
    else if (p.type === 'drive') band(`D:${p.name}`, 'drive', p.name, p.volts, p.tol);
    else if (p.type === 'tube') band(`P:${p.name}`, 'perveance', p.name, 1, spread.get(p.model) ?? 0);
  }
  return out;
}

/**
 * The design with some parameters moved off nominal (by id; the rest stay nominal): new
 * resistor values, rail and drive voltages, and the section variations for the solver.
 * The input design is not changed.
 */
export function applyParameters(design: Design, values: ReadonlyMap<string, number>): { design: Design; variation: Map<string, SectionVariation> } {
  const rails = design.rails.map((r) => (values.has(`V:${r.name}`) ? { ...r, volts: values.get(`V:${r.name}`)! } : r));
  const parts = design.parts.map((p): Part => {
    if (p.type === 'resistor' && values.has(`R:${p.name}`)) return { ...p, ohms: values.get(`R:${p.name}`)! };
    if (p.type === 'drive' && values.has(`D:${p.name}`)) return { ...p, volts: values.get(`D:${p.name}`)! };
    return p;
  });
  const variation = new Map<string, SectionVariation>();
  for (const p of design.parts) {
    if (p.type === 'tube' && values.has(`P:${p.name}`)) variation.set(p.name, { ...NOMINAL_VARIATION, perveance: values.get(`P:${p.name}`)! });
  }
  return { design: { ...design, rails, parts }, variation };
}

/** Largest parameter set `corners` enumerates: 2^16 solves. */
export const MAX_CORNER_PARAMETERS = 16;

/**
 * Every corner of the tolerance box of `parameters` (each at its low or high end): the
 * exhaustive oracle against which faster worst-case methods are checked on small designs.
 * Refuses more than 16 parameters.
 */
export function* corners(parameters: readonly DesignParameter[]): Generator<Map<string, number>> {
  if (parameters.length > MAX_CORNER_PARAMETERS) throw new RangeError(`${parameters.length} parameters: at most ${MAX_CORNER_PARAMETERS} for exhaustive corners`);
  const count = 2 ** parameters.length;
  for (let mask = 0; mask < count; mask++) {
    const m = new Map<string, number>();
    parameters.forEach((p, i) => m.set(p.id, mask & (1 << i) ? p.high : p.low));
    yield m;
  }
}
