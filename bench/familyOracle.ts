import fc from 'fast-check';
import {
  applyParameters,
  buildStageGraph,
  checkMargins,
  corners,
  reproduceWitness,
  designParameters,
  loadDesign,
  logicThreshold,
  solveOperatingPoint,
  type CheckResult,
  type Design,
  type OperatingPoint,
} from '../lib/index.js';
import type { FamilyDesign, FamilyState } from './family.js';

/**
 * The truth about a family design (see `family.ts`), by brute force: in each of its
 * states, the whole circuit solved as `solve` solves it at every corner of the tolerance
 * box and at `interior` random points inside it (a divider both loads the plate that
 * drives it and drives a grid, so a level's extreme need not sit at a corner). A net's true
 * worst high is the lowest it reads over every point of the states its logic says it is
 * high in, its true worst low the highest over those it is low in. From each level's
 * worst point a coordinate search then walks an even grid of every band in turn (a
 * level's extreme can sit inside a band, where random points seldom fall: a rail that
 * raises a plate's level also drives its grid harder); a latch holds when both of its
 * states exist at every point (the state asked for is where the solve settles, the two
 * nets apart by at least a tenth of the swing).
 */
export interface FamilyTruth {
  nets: Map<string, { highMin: number | undefined; lowMax: number | undefined }>;
  /** For a latch: both states exist at every point solved. */
  latchHolds: boolean | undefined;
  /** Where a latch state was lost, the first such point (parameter id → value) and its state. */
  lost: { state: string; values: Map<string, number> } | undefined;
  /** Whole-circuit solves made. */
  solves: number;
  /** Points (corners and interior) in each state. */
  points: number;
}

/** The design of a family member, loaded; throws on a diagnostic (the generator writes valid designs). */
export function familyDesign(fd: FamilyDesign): Design {
  const loaded = loadDesign(`${fd.name}.tube`, fd.text);
  if (!loaded.design || !loaded.ok) throw new Error(`${fd.name} does not load: ${loaded.diagnostics.map((d) => d.message).join('; ')}`);
  return loaded.design;
}

export function familyTruth(fd: FamilyDesign, design: Design, interior: number, seed = 1, grid = { steps: 24, rounds: 3 }): FamilyTruth {
  const graph = buildStageGraph(design);
  const parameters = designParameters(design);
  const points: Map<string, number>[] = [...corners(parameters)];
  for (const u of fc.sample(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: parameters.length, maxLength: parameters.length }), { seed, numRuns: interior })) {
    points.push(new Map(parameters.map((p, i) => [p.id, p.low + (p.high - p.low) * u[i]!])));
  }
  const nets = new Map<string, { highMin: number | undefined; lowMax: number | undefined }>(graph.nets.map((n) => [n.name, { highMin: undefined, lowMax: undefined }]));
  let solves = 0;
  let lost: FamilyTruth['lost'];
  for (const state of fd.states) {
    const close = new Set(state.close);
    const nominal = solveOperatingPoint(design, { graph, close, hints: state.hints });
    solves++;
    if (!('nodes' in nominal) || !nominal.converged || !exists(fd, design, state, nominal)) {
      lost ??= { state: state.label, values: new Map(parameters.map((p) => [p.id, p.nominal])) };
      continue;
    }
    // A latch is solved from its hint at every point, so that a state that no longer
    // exists is found lost; a design without loops has one solution, found from nominal.
    const solveAt = (values: Map<string, number>): OperatingPoint | undefined => {
      const varied = applyParameters(design, values);
      const op = solveOperatingPoint(varied.design, { graph, close, variation: varied.variation, ...(fd.latch ? { hints: state.hints } : { start: nominal.x }) });
      solves++;
      return 'nodes' in op && op.converged && exists(fd, design, state, op) ? op : undefined;
    };
    // Each level's worst point so far, signed so that larger is worse.
    const worst = new Map<string, { value: number; at: Map<string, number> }>();
    const record = (op: OperatingPoint, values: Map<string, number>) => {
      for (const [name, t] of nets) {
        if (state.logic[name] === undefined) continue;
        const v = op.nodes.get(name)!;
        if (state.logic[name]) t.highMin = Math.min(t.highMin ?? Infinity, v);
        else t.lowMax = Math.max(t.lowMax ?? -Infinity, v);
        const signed = state.logic[name] ? -v : v;
        if (signed > (worst.get(name)?.value ?? -Infinity)) worst.set(name, { value: signed, at: values });
      }
    };
    for (const values of points) {
      const op = solveAt(values);
      if (op) record(op, values);
      else lost ??= { state: state.label, values };
    }
    // From each level's worst point, a coordinate search over an even grid of each band
    // (the extreme of a level can sit inside a band, where random points seldom fall).
    for (let [name, w] of lost ? [] : worst) {
      for (let round = 0; round < grid.rounds; round++) {
        const before = w.value;
        for (const p of parameters.filter((q) => q.high > q.low)) {
          for (let k = 0; k <= grid.steps; k++) {
            const values = new Map(w.at).set(p.id, p.low + ((p.high - p.low) * k) / grid.steps);
            const op = solveAt(values);
            if (!op) {
              lost ??= { state: state.label, values };
              continue;
            }
            record(op, values);
            const v = op.nodes.get(name)!;
            if ((state.logic[name] ? -v : v) > w.value) w = { value: state.logic[name] ? -v : v, at: values };
          }
        }
        if (w.value <= before) break;
      }
    }
  }
  return { nets, latchHolds: fd.latch ? lost === undefined : undefined, lost, solves, points: points.length };
}

/** The state asked for exists in this solution: the latch (if any) settled as hinted, its nets apart by a tenth of the swing. */
function exists(fd: FamilyDesign, design: Design, state: FamilyState, op: OperatingPoint): boolean {
  if (!fd.latch) return true;
  const [a, b] = fd.latch;
  const va = op.nodes.get(a)!;
  const vb = op.nodes.get(b)!;
  const threshold = logicThreshold(design, a);
  const aHigh = state.hints.find((h) => h.net === a)!.high;
  return (va > threshold) === aHigh && (vb > threshold) !== aHigh && Math.abs(va - vb) >= 0.2 * threshold;
}

/** One level of one net: what `check` reports against the truth. Positive `pessimism` is on the safe side. */
export interface LevelComparison {
  design: string;
  net: string;
  level: 'high' | 'low';
  reported: number;
  truth: number;
  /** How far the reported level is on the safe side of the truth (volts); negative is optimistic. */
  pessimism: number;
}

export interface FamilyComparison {
  levels: LevelComparison[];
  /** Per judged net: its status and basis, and whether its witness reproduces. */
  verdicts: { design: string; net: string; status: string; basis: string; witness: boolean | undefined }[];
  /** A level `check` reports that the truth never shows, or a truth `check` does not report. */
  missing: string[];
  latch: { design: string; reported: boolean; basis: string; truth: boolean; witness: boolean | undefined } | undefined;
}

/** `check`'s levels and latch verdict for one family design against its truth. */
export function compareWithTruth(fd: FamilyDesign, design: Design, check: CheckResult, truth: FamilyTruth): FamilyComparison {
  const levels: LevelComparison[] = [];
  const missing: string[] = [];
  for (const n of check.nets) {
    const t = truth.nets.get(n.name);
    if (!t) continue;
    for (const level of ['high', 'low'] as const) {
      const reported = n[level]?.worst;
      const real = level === 'high' ? t.highMin : t.lowMax;
      if (reported === undefined || real === undefined) {
        // A state the truth never saw (lost) or the chain does not report is no level to compare.
        if ((reported === undefined) !== (real === undefined) && truth.lost === undefined) missing.push(`${fd.name}: ${n.name} ${level}: reported ${reported ?? '—'}, truth ${real ?? '—'}`);
        continue;
      }
      levels.push({ design: fd.name, net: n.name, level, reported, truth: real, pessimism: level === 'high' ? real - reported : reported - real });
    }
  }
  const l = check.latches[0];
  const latch = fd.latch && truth.latchHolds !== undefined && l ? { design: fd.name, reported: l.holds, basis: l.basis, truth: truth.latchHolds, witness: l.witness ? reproduceWitness(design, l.witness).reproduced : undefined } : undefined;
  const verdicts = check.nets.map((n) => ({ design: fd.name, net: n.name, status: n.status, basis: n.basis, witness: n.witness ? reproduceWitness(design, n.witness).reproduced : undefined }));
  return { levels, verdicts, missing, latch };
}

/** The figures of a family run, as the issue asks for them. */
export interface FamilySummary {
  designs: number;
  levels: number;
  optimistic: LevelComparison[];
  /** Pessimism (volts) of the levels, at the median and at worst, over designs whose latch holds. */
  median: number;
  worst: number;
  worstLevel: LevelComparison | undefined;
  latches: number;
  latchAgree: number;
  /** Latches that hold at every point but are reported as not holding, and the reverse. */
  falseNotHolding: string[];
  falseHolding: string[];
  missing: string[];
  /** Nets by status and basis (`fail/witness`, `pass/corners`, …). */
  statuses: Record<string, number>;
  /** Witnesses printed, and those that do not reproduce. */
  witnesses: number;
  unreproduced: string[];
  /** Latches left undecided. */
  undecidedLatches: string[];
  solves: number;
  ms: number;
  /** Time spent in `check` alone. */
  checkMs: number;
}

/** Runs `check` and the truth on each design and sums up. `tolerance` absorbs the solver's own rounding (volts). */
export function runFamily(designs: FamilyDesign[], interior: number, tolerance = 1e-3): FamilySummary & { comparisons: FamilyComparison[] } {
  const started = performance.now();
  const comparisons: FamilyComparison[] = [];
  let solves = 0;
  let checkMs = 0;
  for (const fd of designs) {
    const design = familyDesign(fd);
    const t0 = performance.now();
    const check = checkMargins(design);
    checkMs += performance.now() - t0;
    if (!('verdict' in check)) throw new Error(`${fd.name}: check refused it: ${check.diagnostics.map((d) => d.message).join('; ')}`);
    const truth = familyTruth(fd, design, interior);
    solves += truth.solves;
    comparisons.push(compareWithTruth(fd, design, check, truth));
  }
  const levels = comparisons.flatMap((c) => c.levels);
  const holding = new Set(comparisons.filter((c) => !c.latch || c.latch.truth).flatMap((c) => c.levels.map((l) => l.design)));
  const judged = levels.filter((l) => holding.has(l.design)).sort((a, b) => a.pessimism - b.pessimism);
  const latches = comparisons.flatMap((c) => (c.latch ? [c.latch] : []));
  const verdicts = comparisons.flatMap((c) => c.verdicts);
  const statuses: Record<string, number> = {};
  for (const v of verdicts) statuses[`${v.status}/${v.basis}`] = (statuses[`${v.status}/${v.basis}`] ?? 0) + 1;
  const witnessed = [...verdicts.filter((v) => v.witness !== undefined).map((v) => ({ what: `${v.design}: ${v.net}`, ok: v.witness! })), ...latches.filter((l) => l.witness !== undefined).map((l) => ({ what: `${l.design}: latch`, ok: l.witness! }))];
  return {
    statuses,
    witnesses: witnessed.length,
    unreproduced: witnessed.filter((w) => !w.ok).map((w) => w.what),
    undecidedLatches: latches.filter((l) => l.basis === 'undecided').map((l) => l.design),
    checkMs,
    comparisons,
    designs: designs.length,
    levels: levels.length,
    optimistic: levels.filter((l) => l.pessimism < -tolerance),
    median: judged.length ? judged[Math.floor(judged.length / 2)]!.pessimism : 0,
    worst: judged.length ? judged[judged.length - 1]!.pessimism : 0,
    worstLevel: judged[judged.length - 1],
    latches: latches.length,
    latchAgree: latches.filter((l) => l.reported === l.truth).length,
    falseNotHolding: latches.filter((l) => l.truth && !l.reported && l.basis !== 'undecided').map((l) => l.design),
    falseHolding: latches.filter((l) => !l.truth && l.reported).map((l) => l.design),
    missing: comparisons.flatMap((c) => c.missing),
    solves,
    ms: performance.now() - started,
  };
}
