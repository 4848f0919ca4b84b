import type { Design, Part } from '../design/model.js';
import { NOMINAL_VARIATION, type SectionVariation } from '../models/tubeEquations.js';
import type { LocalParameter } from './localProblem.js';
import type { Region } from './region.js';

/**
 * A region as a design of its own: its parts, the rails and models they use, and a stiff
 * drive holding each boundary net at `levels` (0 V where absent). With `values` (in
 * `regionParameters` order, matching `parameters`), resistors, drives and rails take
 * those values and sections get their emission and interface as variations.
 *
 * Example: the region of a latch with its set input as a boundary becomes a design the
 * full solver and the trigger continuation can work on.
 */
export function localDesign(
  design: Design,
  region: Region,
  levels: ReadonlyMap<string, number> = new Map(),
  parameters?: readonly LocalParameter[],
  values?: ArrayLike<number>,
): { design: Design; variation: Map<string, SectionVariation> } {
  const valueOf = new Map<string, number>();
  parameters?.forEach((p, i) => valueOf.set(`${p.kind}:${p.target}`, values![i]!));
  const parts: Part[] = region.parts.map((p) => {
    if (p.type === 'resistor' && valueOf.has(`resistor:${p.name}`)) return { ...p, ohms: valueOf.get(`resistor:${p.name}`)! };
    if (p.type === 'drive' && valueOf.has(`drive:${p.name}`)) return { ...p, volts: valueOf.get(`drive:${p.name}`)! };
    return p;
  });
  for (const net of region.boundaries) parts.push({ type: 'drive', name: `boundary:${net}`, node: net, volts: valueOf.get(`level:${net}`) ?? levels.get(net) ?? 0, tol: 0, sourceOhms: 0 });
  const rails = region.rails.map((r) => (valueOf.has(`rail:${r.name}`) ? { ...r, volts: valueOf.get(`rail:${r.name}`)! } : r));
  const variation = new Map<string, SectionVariation>();
  for (const p of region.parts) {
    if (p.type !== 'tube') continue;
    const perveance = valueOf.get(`perveance:${p.name}`);
    const cathodeOhms = valueOf.get(`interface:${p.name}`);
    if (perveance !== undefined || cathodeOhms !== undefined) variation.set(p.name, { ...NOMINAL_VARIATION, perveance: perveance ?? 1, cathodeOhms: cathodeOhms ?? 0 });
  }
  return { design: { title: design.title, settings: design.settings, rails, models: region.models, parts }, variation };
}
