import { error, type Diagnostic } from '../source/diagnostic.js';
import { MAX_TOLERANCE } from './evaluate.js';
import { DIODE_RANGES, GROUND, partPins, type Design } from './model.js';
import { GRID_RANGES, MODEL_KINDS } from '../models/kinds.js';

/**
 * Asserts the flat model is internally consistent: the invariant every pass may rely on.
 * Any finding is a bug in the tool (code `model-inconsistent`), never a user error: the
 * expander and the JSON reader report user errors themselves. Run after every stage in
 * tests and under `--check-model`.
 *
 * Invariants: part, model and rail names are unique and non-empty; no rail is `gnd`; every
 * section's model exists and has every parameter of its kind, each within its range; every value is finite; every
 * resistance, capacitance and rating is positive; tolerances and spreads lie in 0–50 %;
 * every net name is non-empty; a generated part's `stage` is one of its nets.
 */
export function checkDesign(design: Design): Diagnostic[] {
  const problems: string[] = [];
  const names = new Set<string>();
  for (const p of design.parts) {
    if (!p.name) problems.push(`a ${p.type} has no name`);
    if (names.has(p.name)) problems.push(`part name '${p.name}' is used twice`);
    names.add(p.name);
    for (const [pin, net] of partPins(p)) if (typeof net !== 'string' || net === '') problems.push(`${p.name}.${pin} has no net`);
    const nums = Object.entries(p).filter(([, v]) => typeof v === 'number') as [string, number][];
    for (const [k, v] of nums) if (!Number.isFinite(v)) problems.push(`${p.name}.${k} is not finite`);
    if (p.type === 'resistor' && !(p.ohms > 0 && p.watts > 0)) problems.push(`${p.name} has a non-positive value or rating`);
    if (p.type === 'capacitor' && !(p.farads > 0)) problems.push(`${p.name} has a non-positive capacitance`);
    if (p.type === 'diode' && (['is', 'n', 'rs'] as const).some((k) => !(p[k] >= DIODE_RANGES[k].min && p[k] <= DIODE_RANGES[k].max))) problems.push(`${p.name} has diode constants outside their range`);
    if ((p.type === 'resistor' || p.type === 'capacitor' || p.type === 'drive') && !(p.tol >= 0 && p.tol <= MAX_TOLERANCE)) problems.push(`${p.name} has tolerance ${p.tol}`);
    if (p.stage !== undefined && !partPins(p).some(([, n]) => n === p.stage) && p.role !== 'series' && p.role !== 'pulldown' && p.role !== 'screen' && p.role !== 'speedup') {
      problems.push(`${p.name} claims stage '${p.stage}' but does not touch it`);
    }
  }
  const models = new Map(design.models.map((m) => [m.name, m]));
  if (models.size !== design.models.length) problems.push('two models share a name');
  for (const m of design.models) {
    for (const param of MODEL_KINDS[m.kind].parameters) {
      const v = (m as unknown as Record<string, unknown>)[param.name];
      if (typeof v !== 'number' || !Number.isFinite(v)) problems.push(`model ${m.name} lacks ${param.name}`);
      else if (v < param.range.min || v > param.range.max) problems.push(`model ${m.name} has ${param.name} = ${v}, outside its range`);
    }
    if (m.vgamma < GRID_RANGES.vgamma.min || m.vgamma > GRID_RANGES.vgamma.max || m.rgi < GRID_RANGES.rgi.min || m.rgi > GRID_RANGES.rgi.max) problems.push(`model ${m.name} has grid constants outside their range`);
    if (!(m.spread >= 0 && m.spread <= MAX_TOLERANCE)) problems.push(`model ${m.name} has spread ${m.spread}`);
    if (!(m.rgi > 0) || !Number.isFinite(m.vgamma)) problems.push(`model ${m.name} has bad grid constants`);
  }
  for (const p of design.parts) if (p.type === 'tube' && !models.has(p.model)) problems.push(`${p.name} uses missing model '${p.model}'`);
  const rails = new Set<string>();
  for (const r of design.rails) {
    if (r.name === GROUND) problems.push('a rail is named gnd');
    if (rails.has(r.name)) problems.push(`rail '${r.name}' is defined twice`);
    rails.add(r.name);
    if (!Number.isFinite(r.volts) || !(r.tol >= 0 && r.tol <= MAX_TOLERANCE) || !(r.sourceOhms >= 0)) problems.push(`rail '${r.name}' has bad values`);
  }
  return problems.map((m) => error('model-inconsistent', `internal: ${m}`, undefined));
}
