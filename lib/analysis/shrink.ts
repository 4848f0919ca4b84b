import fc from 'fast-check';
import type { Design } from '../design/model.js';
import { analyzeAt, deviationsOf, valueAt, type Deviations } from './analyzeAt.js';
import type { CheckResult } from './check.js';
import { designParameters } from './parameters.js';

/** One part away from nominal in a failing case. */
export interface Deviation {
  /** Parameter id: `R:name`, `V:rail`, `D:drive`, `P:section`. */
  id: string;
  target: string;
  kind: 'resistor' | 'rail' | 'drive' | 'perveance';
  /** Share of the way to the end of its band (−1 … 1). */
  deviation: number;
  /** The value there (ohms, volts, or an emission factor). */
  value: number;
}

export interface ShrinkResult {
  /** A failing set of deviations was found. */
  found: boolean;
  /** The smallest failing set found, largest deviations first; empty when none was found. */
  deviations: Deviation[];
  /** What fails with those deviations. */
  failing: string[];
  /** Random cases tried, and shrinking steps taken. */
  runs: number;
  shrinks: number;
  seed: number;
}

/** Deviations below this are nominal for the report. */
const NOMINAL = 1e-9;

/**
 * Searches for a failing set of deviations and shrinks it to the smallest (fast-check's
 * shrinking, which moves every deviation towards nominal and drops what is not needed).
 * The search starts from the corners that `check` found worst (every failing net's and
 * the three weakest nets' causes at their ends), then tries `runs` random cases.
 */
export function shrinkFailure(design: Design, check: CheckResult, options: { seed: number; runs: number }): ShrinkResult {
  const ids = new Set(designParameters(design).map((p) => p.id));
  const prefix = { resistor: 'R', rail: 'V', drive: 'D', perveance: 'P' } as const;
  const examples: Deviations[] = [];
  for (const n of check.nets) {
    const causes = n.weakest?.causes ?? [];
    if (causes.length === 0) continue;
    const d: Record<string, number> = {};
    for (const c of causes) {
      if (!(c.kind in prefix)) continue;
      const id = `${prefix[c.kind as keyof typeof prefix]}:${c.target}`;
      if (ids.has(id)) d[id] = c.end === 'high' ? 1 : -1;
    }
    if (Object.keys(d).length > 0) examples.push(d);
  }
  const full = (d: Deviations) => Object.fromEntries([...ids].map((id) => [id, d[id] ?? 0]));
  const out = fc.check(
    fc.property(deviationsOf(design), (d) => analyzeAt(design, d).pass),
    { seed: options.seed, numRuns: options.runs, examples: examples.map((e) => [full(e)] as [Deviations]) },
  );
  if (!out.failed || !out.counterexample) return { found: false, deviations: [], failing: [], runs: out.numRuns, shrinks: 0, seed: options.seed };
  const found = out.counterexample[0];
  const parameters = designParameters(design);
  const deviations = parameters
    .filter((p) => Math.abs(found[p.id] ?? 0) > NOMINAL)
    .map((p) => ({ id: p.id, target: p.target, kind: p.kind, deviation: found[p.id]!, value: valueAt(p, found[p.id]!) }))
    .sort((a, b) => Math.abs(b.deviation) - Math.abs(a.deviation));
  return { found: true, deviations, failing: analyzeAt(design, found).failing, runs: out.numRuns, shrinks: out.numShrinks, seed: options.seed };
}
