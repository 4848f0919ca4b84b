import { designNets, type Design, type Part } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { NOMINAL_VARIATION, type SectionVariation } from '../models/tubeEquations.js';
import { logicThreshold, solveOperatingPoint, type OperatingPoint, type StateHint } from '../solve/operatingPoint.js';
import type { AgeingScenario } from './ageing.js';
import { buildRegion, indexDesign } from './region.js';
import { designParameters } from './parameters.js';

import { LocalProblem, regionParameters, type LocalParameter } from './localProblem.js';
import type { LatchResult } from './latchCheck.js';
import type { TransferCurve } from './staticNoiseMargin.js';
import { sweepTransfer } from './transferCurve.js';
import { unityGainPoints } from './unityGain.js';
import type { Progress } from '../progress.js';

/**
 * Corners of the whole design: where the chained bounds cannot decide a question, the
 * question is put to the whole circuit, solved as `solve` solves it, at concrete values of
 * every toleranced part, rail and section. A corner found this way is a witness: anyone
 * can solve the design there and see what it shows.
 */

/** Parameters enumerated exhaustively at most: 2^10 = 1,024 corners per question. */
export const EXHAUSTIVE_PARAMETERS = 10;

/** A witness names this many of its parameters as the ones that matter most. */
export const WITNESS_KEY = 5;

/** The whole design compiled once, contacts at the design's positions, with its parameters (every part, rail and section of the design, scenario included). */
export class WholeDesign {
  readonly problem: LocalProblem;
  readonly parameters: LocalParameter[];
  readonly nominal: Float64Array;

  constructor(
    readonly design: Design,
    readonly graph: StageGraph,
    readonly scenario: AgeingScenario,
  ) {
    const region = buildRegion(indexDesign(design, graph), graph.nets.map((n) => n.name), [], undefined, Infinity);
    this.problem = new LocalProblem(design, region, scenario);
    this.parameters = regionParameters(design, region, scenario);
    this.nominal = Float64Array.from(this.parameters, (p) => p.nominal);
    this.corners = 2 ** Math.min(EXHAUSTIVE_PARAMETERS, this.parameters.filter((p) => p.high > p.low).length);
  }

  /** Corners a search solves: 2 to the number of toleranced parameters, at most 2^`EXHAUSTIVE_PARAMETERS`. */
  readonly corners: number;

  private byTarget: Map<string, number> | undefined;

  /**
   * \`values\` with a region's own parameters (\`local\`, its boundary levels left out) put at
   * \`corner\`, in place; returns what it changed, in the region's order: each parameter's
   * index in the region and in this design.
   */
  putCorner(local: readonly LocalParameter[], corner: ArrayLike<number>, values: Float64Array): { local: number; whole: number }[] {
    this.byTarget ??= new Map(this.parameters.map((p, i) => [`${p.kind}|${p.target}`, i]));
    const moved: { local: number; whole: number }[] = [];
    local.forEach((p, i) => {
      const j = p.kind === 'level' ? undefined : this.byTarget!.get(`${p.kind}|${p.target}`);
      if (j === undefined || values[j] === corner[i]) return;
      values[j] = corner[i]!;
      moved.push({ local: i, whole: j });
    });
    return moved;
  }

  /** Terminal of a net in the compiled circuit. */
  terminal(net: string): number {
    return this.problem.circuit.terminalOf.get(net)!;
  }

  /**
   * The state the hints ask for at `values` (nominal when absent), solved as `solve` solves
   * it, as the problem's unknowns; undefined when it does not exist there. Where Newton
   * from a neighbouring corner fails, this (with its continuation) can still find it.
   */
  state(hints: StateHint[], values: Float64Array = this.nominal): Float64Array | undefined {
    const at = values === this.nominal ? { design: this.design, variation: undefined } : designAtValues(this.design, this.named(values));
    const op = solveOperatingPoint(at.design, { graph: this.graph, hints, ...(at.variation ? { variation: at.variation } : {}) });
    if (!('nodes' in op) || !op.converged || op.hints.some((h) => !h.held)) return undefined;
    const c = this.problem.circuit;
    // By name, internal nodes (a diode's junction, a cathode behind its interface) included: started at 0 V, a latch can slide to its balance point.
    const solved = new Map(op.system.circuit.nodeNames.map((name, i) => [name, op.x[i]!]));
    const x = Float64Array.from(c.nodeNames, (name) => solved.get(name) ?? op.nodes.get(name) ?? 0);
    return this.problem.solveFrom(values, x) ? Float64Array.from(this.problem.solution) : undefined;
  }

  /** Parameter values by the design's own names (ohms, volts, emission factors): a witness's `values`. */
  named(values: ArrayLike<number>): Record<string, number> {
    const out: Record<string, number> = {};
    this.parameters.forEach((p, i) => {
      if (p.high > p.low) out[witnessName(p)] = values[i]!;
    });
    return out;
  }
}

/**
 * The name a parameter goes by in a witness: the part's, rail's, drive's or section's own
 * (its value in ohms, volts or as an emission factor), and `SECTION:interface` for a
 * section's cathode interface resistance (ohms) under an ageing scenario.
 */
export function witnessName(p: LocalParameter): string {
  return p.kind === 'interface' ? `${p.target}${INTERFACE_SUFFIX}` : p.target;
}

export const INTERFACE_SUFFIX = ':interface';

/**
 * A concrete corner at which the whole design fails, for a builder to re-solve: every
 * toleranced part, rail, drive and section by name with its absolute value (ohms, volts,
 * emission factor; `SECTION:interface` in ohms), the contacts' positions, the latch
 * states asked for, and what fails there.
 */
export interface Witness {
  values: Record<string, number>;
  /** The names in `values` that move the failing quantity most, most first (the rest sit at the ends their slopes give). */
  key: string[];
  positions: Record<string, 'closed' | 'open'>;
  states: Record<string, 'high' | 'low'>;
  /** What the whole design shows at this corner, in words. */
  shows: string;
  /**
   * For a net's level: the level it takes there, what it is judged against (worked out at
   * the same values: a receiving stage's VIH or VIL, or the logic threshold) and the margin
   * required against it (0 for the logic threshold).
   */
  level?: { net: string; state: 'high' | 'low'; volts: number; against: { what: 'VIH' | 'VIL' | 'logic threshold'; volts: number; stage?: string }; required: number };
  /** For a section not cut off while its net is high: its grid against its cathode there, and its cutoff grid voltage at the same plate voltage. */
  grid?: { section: string; vgk: number; cutoff: number };
  /**
   * For a receiving stage whose gain never reaches 1: the net that drives it, held by a
   * stiff source and swept from \`from\` to \`to\` in \`points\` steps with the rest of the
   * design solved at each (\`sweepTransfer\`), and the steepest fall of the stage's output
   * there (volts per volt, below 1): the stage cannot restore the levels it is given.
   */
  gain?: { net: string; stage: string; from: number; to: number; points: number; steepest: number };
}

/**
 * The transfer curve a gain witness names, at its values, contacts and states, and its
 * steepest fall (volts per volt); undefined where a point does not solve.
 */
export function gainCurveAt(design: Design, witness: Pick<Witness, 'values' | 'positions' | 'states'> & { gain: NonNullable<Witness['gain']> }): { curve: TransferCurve; steepest: number; unity: boolean } | undefined {
  const { net, stage, from, to, points } = witness.gain;
  const at = designAtValues(withPositions(design, witness.positions), witness.values);
  const hints = Object.entries(witness.states).map(([n, s]) => ({ net: n, high: s === 'high' }));
  const curve = sweepTransfer(at.design, { input: net, output: stage, from, to, points, variation: at.variation, hints });
  if (!curve) return undefined;
  let steepest = 0;
  for (let i = 0; i + 1 < curve.vin.length; i++) steepest = Math.max(steepest, -(curve.vout[i + 1]! - curve.vout[i]!) / (curve.vin[i + 1]! - curve.vin[i]!));
  return { curve, steepest, unity: unityGainPoints(curve.vin, curve.vout) !== undefined };
}

/**
 * The design with a witness's values put in (the names it does not give keep their
 * nominal values), as `solve --at` solves it: the parts, rails and drives changed, the
 * sections' emission and interface as their variation. Unknown names are returned, not
 * thrown: a witness from an older design may name a part that is gone.
 */
export function designAtValues(design: Design, values: Readonly<Record<string, number>>): { design: Design; variation: Map<string, SectionVariation>; unknown: string[] } {
  const used = new Set<string>();
  const take = (name: string): number | undefined => {
    const v = values[name];
    if (v !== undefined) used.add(name);
    return v;
  };
  const rails = design.rails.map((r) => {
    const v = take(r.name);
    return v === undefined ? r : { ...r, volts: v };
  });
  const variation = new Map<string, SectionVariation>();
  const parts = design.parts.map((p): Part => {
    if (p.type === 'resistor') {
      const v = take(p.name);
      return v === undefined ? p : { ...p, ohms: v };
    }
    if (p.type === 'drive') {
      const v = take(p.name);
      return v === undefined ? p : { ...p, volts: v };
    }
    if (p.type === 'tube') {
      const perveance = take(p.name);
      const cathodeOhms = take(`${p.name}${INTERFACE_SUFFIX}`);
      if (perveance !== undefined || cathodeOhms !== undefined) variation.set(p.name, { ...NOMINAL_VARIATION, perveance: perveance ?? 1, cathodeOhms: cathodeOhms ?? 0 });
    }
    return p;
  });
  return { design: { ...design, rails, parts }, variation, unknown: Object.keys(values).filter((k) => !used.has(k)) };
}

/** A latch state: each net of the latch on its side of its threshold, the two apart by a tenth of the swing. */
export interface LatchState {
  high: number;
  low: number;
  threshold: number;
}

/** What a corner search asks: a weighted sum of net voltages to push towards `worst`, in a state that must keep existing. */
export interface CornerQuestion {
  terms: { terminal: number; weight: number }[];
  worst: 'min' | 'max';
  /** The state's solution at nominal values, each solve starting from it or from a neighbour. */
  start: Float64Array;
  /** Latches that must stay in their state (the state is lost at a corner where one does not). */
  latches: LatchState[];
  /** Work the search may take at most (Newton iterations times unknowns); past it, the corners left are not solved. */
  cap?: number;
}

export interface CornerAnswer {
  /** The most extreme value of the objective over the corners where the state exists. */
  worst: number | undefined;
  /** Its corner. */
  at: Float64Array | undefined;
  /** A corner where the state does not exist (the first found), if any. */
  lost: Float64Array | undefined;
  /** Every corner of every toleranced parameter was solved. */
  exhaustive: boolean;
  corners: number;
  /** The parameters enumerated, those that move the objective most first (indices into the parameters). */
  ranked: number[];
  /** The work it took: Newton iterations times unknowns. */
  work: number;
}

/**
 * The worst corner of the whole design for one question: the slopes of the objective at
 * nominal values (adjoint method) rank the parameters; the `EXHAUSTIVE_PARAMETERS` that
 * move it most are enumerated over every corner (in Gray-code order, each solve starting
 * from its neighbour), the rest sit at the end their slope makes worse. When every
 * toleranced parameter is among those enumerated, the answer is exhaustive over the
 * corners. A corner where a latch leaves its state is kept as `lost`.
 */
export function searchCorners(w: WholeDesign, q: CornerQuestion): CornerAnswer {
  const problem = w.problem;
  const iterations = problem.system.iterationCount;
  const work = () => (problem.system.iterationCount - iterations) * problem.circuit.n;
  const bands = w.parameters;
  const sign = q.worst === 'min' ? -1 : 1;
  const value = () => q.terms.reduce((s, t) => s + t.weight * problem.volts(t.terminal), 0);
  const inState = () => q.latches.every((l) => latchHeld(problem.volts(l.high), problem.volts(l.low), l.threshold));
  const solveAt = (values: Float64Array, from: Float64Array): boolean => problem.solveFrom(values, from) && inState();
  if (!solveAt(w.nominal, q.start)) return { worst: undefined, at: undefined, lost: Float64Array.from(w.nominal), exhaustive: false, corners: 1, ranked: [], work: work() };
  // Rank by the linearised effect across each band.
  const slopes = new Float64Array(bands.length);
  for (const t of q.terms) {
    const s = problem.slopesAt(t.terminal);
    if (s) for (let i = 0; i < s.length; i++) slopes[i]! += t.weight * s[i]!;
  }
  const varied = bands.map((b, i) => ({ i, effect: Math.abs(slopes[i]! * (b.high - b.low)), width: b.high - b.low })).filter((p) => p.width > 0);
  varied.sort((a, b) => b.effect - a.effect);
  const free = varied.slice(0, EXHAUSTIVE_PARAMETERS).map((p) => p.i);
  const values = Float64Array.from(bands, (b, i) => (sign * slopes[i]! >= 0 ? b.high : b.low));
  for (const i of free) values[i] = bands[i]!.low;
  let worst: number | undefined;
  let at: Float64Array | undefined;
  const { lost, solved, complete } = walkCorners(problem, values, free, bands, q.start, solveAt, () => q.cap !== undefined && work() > q.cap, () => {
    const v = value();
    if (worst === undefined || sign * (v - worst) > 0) {
      worst = v;
      at = Float64Array.from(values);
    }
  });
  return { worst, at, lost, exhaustive: free.length === varied.length && complete, corners: solved, ranked: free, work: work() };
}

/**
 * Every corner of the parameters `free` (the others as `values` holds them), in Gray-code
 * order: each corner differs from the one before in one parameter and is solved from it
 * (from `start` when that fails, before the state is called lost there). `visit` is called
 * at each corner solved, with `values` holding it; `stop` is asked before each corner.
 * `lost` is the first corner where the state was not found; `complete`, every corner solved.
 */
export function walkCorners(
  problem: LocalProblem,
  values: Float64Array,
  free: readonly number[],
  bands: readonly { low: number; high: number }[],
  start: Float64Array,
  solveAt: (values: Float64Array, from: Float64Array) => boolean,
  stop: () => boolean,
  visit: () => void,
  rescue?: (values: Float64Array) => boolean,
): { lost: Float64Array | undefined; solved: number; complete: boolean } {
  let lost: Float64Array | undefined;
  let from = Float64Array.from(start);
  const count = 2 ** free.length;
  let solved = 0;
  for (let g = 0; g < count; g++) {
    // A corner that will not converge can take a thousand iterations: `stop` counts them.
    if (stop()) break;
    solved++;
    if (g > 0) {
      // Gray code: corner g differs from corner g − 1 in one parameter, the lowest set bit of g.
      const i = free[31 - Math.clz32(g & -g)]!;
      values[i] = values[i] === bands[i]!.low ? bands[i]!.high : bands[i]!.low;
    }
    if (!solveAt(values, from) && !solveAt(values, start) && !rescue?.(values)) {
      lost ??= Float64Array.from(values);
      continue;
    }
    from = Float64Array.from(problem.solution);
    visit();
  }
  return { lost, solved, complete: solved === count };
}

/**
 * Whether latch [a, b] keeps both of its states at every corner, put to the whole design
 * with its contacts at rest: for each state, the corner search pushes the two nets
 * towards each other. `lost` is a corner (and the state) where a state does not exist.
 */
export function latchCorners(w: WholeDesign, latch: [string, string], cap = Infinity): { lost: { values: Float64Array; high: string; ranked: number[] } | undefined; exhaustive: boolean; corners: number; work: number } {
  // A corner where the local solve lost the state counts only when the whole design,
  // solved as `solve` solves it from the state's hint, loses it there too.
  const confirmed = (values: Float64Array, high: string) => {
    const at = designAtValues(w.design, w.named(values));
    const op = solveOperatingPoint(at.design, { graph: w.graph, hints: [{ net: high, high: true }], variation: at.variation });
    return !('nodes' in op) || !op.converged || !stateHolds(w.design, op.nodes, high, high === latch[0] ? latch[1] : latch[0]);
  };
  const [a, b] = latch;
  const threshold = logicThreshold(w.design, a);
  let exhaustive = true;
  let corners = 0;
  let work = 0;
  for (const [high, low] of [[a, b], [b, a]] as const) {
    const start = w.state([{ net: high, high: true }]);
    if (!start) return { lost: { values: Float64Array.from(w.nominal), high, ranked: [] }, exhaustive, corners: corners + 1, work };
    const answer = searchCorners(w, {
      terms: [
        { terminal: w.terminal(high), weight: 1 },
        { terminal: w.terminal(low), weight: -1 },
      ],
      worst: 'min',
      start,
      latches: [{ high: w.terminal(high), low: w.terminal(low), threshold }],
      cap: cap - work,
    });
    corners += answer.corners;
    work += answer.work;
    exhaustive &&= answer.exhaustive;
    if (answer.lost) {
      if (confirmed(answer.lost, high)) return { lost: { values: answer.lost, high, ranked: answer.ranked }, exhaustive, corners, work };
      // The local solve failed where the whole design holds: not a witness, and not a corner shown to hold.
      exhaustive = false;
    }
  }
  return { lost: undefined, exhaustive, corners, work };
}

/** In a full solution, `high` reads high, `low` reads low, and the two are apart by a tenth of the swing (not the metastable point). */
export function stateHolds(design: Design, nodes: ReadonlyMap<string, number>, high: string, low: string): boolean {
  return latchHeld(nodes.get(high)!, nodes.get(low)!, logicThreshold(design, high));
}

/**
 * A latch's state, from its two nets' voltages: the high one above the logic threshold,
 * the low one at or below it, and the two apart by a tenth of the swing (twice the
 * threshold), as `solve` tells a state from the metastable point.
 */
export function latchHeld(high: number, low: number, threshold: number): boolean {
  return high > threshold && low <= threshold && high - low >= 0.2 * threshold;
}

/**
 * The work one check spends at most on corners of the whole design, to decide the latches
 * and nets its bounds cannot, counted as Newton iterations times the unknowns of the
 * circuit (a corner of a design of 20 nodes, solved in 3 iterations from its neighbour,
 * costs 60; one that does not converge costs hundreds of iterations, and counts them):
 * about a second on a plain CPU. Past it, what is left is undecided.
 */
export const CORNER_WORK = 1_200_000;

/** Newton iterations a corner takes from its neighbour, as the budget plans (what it spends is what was taken). */
export const ITERATIONS_PER_CORNER = 3;

/** A design's nets, counted once per design. */
const netCount = new WeakMap<Design, number>();

/** The work of one search of a whole design, estimated once per design. */
const searchWork = new WeakMap<Design, number>();

/** The phase a budget's spending is told as: the bar's total is the most the search may do, which it often does not need. */
const BUDGET_PHASE = 'corners, % of the most the budget allows';

/** What is left of `CORNER_WORK` in one check. */
export class CornerBudget {
  /** The work the check started with. */
  readonly total: number;

  constructor(
    public left = CORNER_WORK,
    private readonly progress?: Progress,
  ) {
    this.total = left;
    progress?.(BUDGET_PHASE, 0, 100);
  }

  /** Whether `corners` corners of `w` can be planned for; a search is then capped at what is left. */
  affords(w: WholeDesign, corners: number): boolean {
    return corners * ITERATIONS_PER_CORNER * w.problem.circuit.n <= this.left;
  }

  spend(work: number): void {
    this.left -= work;
    this.progress?.(BUDGET_PHASE, this.total > 0 ? Math.min(100, Math.round((100 * (this.total - this.left)) / this.total)) : 100, 100);
  }

  /** Whether `solves` solves of the whole of `design` could fit, judged before compiling it (its nets stand for its unknowns). */
  couldSolve(design: Design, solves: number, iterations = ITERATIONS_PER_CORNER): boolean {
    let nets = netCount.get(design);
    if (nets === undefined) netCount.set(design, (nets = designNets(design).length));
    return solves * iterations * nets <= this.left;
  }

  /**
   * Whether a search of the whole of `design` could fit at all, judged before compiling
   * it: its nets stand for its unknowns, 2 to its toleranced parameters (at most
   * 2^`EXHAUSTIVE_PARAMETERS`) for the corners, `questions` searches.
   */
  couldAfford(design: Design, questions = 1, left = this.left): boolean {
    let work = searchWork.get(design);
    if (work === undefined) searchWork.set(design, (work = 2 ** Math.min(EXHAUSTIVE_PARAMETERS, designParameters(design).length) * ITERATIONS_PER_CORNER * designNets(design).length));
    return questions * work <= left;
  }
}


/**
 * The design with its contacts at the positions given (a switch the design closes may be
 * opened, an open one or a button closed); those not named keep the design's own.
 */
export function withPositions(design: Design, positions: Readonly<Record<string, 'closed' | 'open'>>): Design {
  const moved = design.parts.some((p) => p.type === 'switch' && positions[p.name] !== undefined && (positions[p.name] === 'closed') !== p.closed);
  return moved ? { ...design, parts: design.parts.map((p) => (p.type === 'switch' && positions[p.name] !== undefined ? { ...p, closed: positions[p.name] === 'closed' } : p)) } : design;
}

/** The position of every contact, for a witness, with those in `moved` moved from the design's own (a closed switch opened, an open one or a button closed). */
export function positionsAfter(design: Design, moved: readonly string[] = []): Record<string, 'closed' | 'open'> {
  const out: Record<string, 'closed' | 'open'> = {};
  for (const p of design.parts) if (p.type === 'switch') out[p.name] = p.closed !== moved.includes(p.name) ? 'closed' : 'open';
  return out;
}

/**
 * Decides a latch the chained bounds could not show to hold (`basis` 'undecided' from
 * `latchCheck`), by the corners of the whole design with its contacts at rest: a corner
 * where a state is lost makes it fail with that corner as its witness; every corner
 * keeping both states makes it hold; otherwise it stays undecided. The corners solved
 * are taken from `budget`.
 */
export function decideLatch(w: WholeDesign, l: LatchResult, budget: CornerBudget): void {
  const bounds = l.reasons.length > 0 ? ` (the bounds: ${l.reasons.join('; ')})` : '';
  if (!budget.affords(w, 2 * w.corners)) {
    l.reasons = [`undecided: the worst-case bounds cannot show that it holds${bounds}, and this check's budget for corners of the whole design is spent`];
    return;
  }
  const found = latchCorners(w, l.nets, budget.left);
  budget.spend(found.work);
  l.corners = found.corners;
  if (found.lost) {
    const [a, b] = l.nets;
    const low = found.lost.high === a ? b : a;
    l.holds = false;
    l.basis = 'witness';
    l.witness = {
      values: w.named(found.lost.values),
      key: found.lost.ranked.slice(0, WITNESS_KEY).map((i) => witnessName(w.parameters[i]!)),
      positions: positionsAfter(w.design),
      states: { [found.lost.high]: 'high', [low]: 'low' },
      shows: `the state with ${found.lost.high} high and ${low} low does not exist${found.lost.values.every((v, i) => v === w.nominal[i]) ? ' even at nominal values' : ''}: the whole design, started in it, settles elsewhere`,
    };
    l.reasons = [`it cannot hold a state: at the corner of its witness, ${l.witness.shows}`];
  } else if (found.exhaustive) {
    l.holds = true;
    l.basis = 'corners';
    l.reasons = [`it holds: both states exist at every corner of the whole design (${found.corners.toLocaleString('en')} corners solved)${bounds}`];
  } else {
    l.reasons = [`undecided: the worst-case bounds cannot show that it holds${bounds}, and the ${found.corners.toLocaleString('en')} corners of the whole design searched lost no state, though not every corner was solved`];
  }
}

/** What re-solving a witness shows. */
export interface Reproduction {
  /** The whole design solved at the witness's values, contacts and states. */
  op: OperatingPoint | undefined;
  /** The failure the witness names is there. */
  reproduced: boolean;
  /** What was seen, in words. */
  seen: string;
  /** Names in the witness the design does not have. */
  unknown: string[];
}

/**
 * Solves the whole design at a witness, as `solve` solves it (the latch states it names
 * as hints, its contacts at the positions it gives), and says whether the failure is there: for a
 * level, the net at the level it names (within a millivolt) on the wrong side of what it
 * is judged against; for a latch state, the state not held.
 */
export function reproduceWitness(design: Design, witness: Witness, graph?: StageGraph): Reproduction {
  const at = designAtValues(withPositions(design, witness.positions), witness.values);
  const hints = Object.entries(witness.states).map(([net, s]) => ({ net, high: s === 'high' }));
  const op = solveOperatingPoint(at.design, { ...(graph ? { graph } : {}), hints, variation: at.variation });
  if (!('nodes' in op)) return { op: undefined, reproduced: false, seen: op.diagnostics.map((d) => d.message).join('; '), unknown: at.unknown };
  const level = witness.level;
  if (level) {
    const volts = op.nodes.get(level.net);
    if (volts === undefined || !op.converged) return { op, reproduced: false, seen: `${level.net} did not solve`, unknown: at.unknown };
    const margin = level.state === 'high' ? volts - level.against.volts : level.against.volts - volts;
    const fails = level.against.what === 'logic threshold' ? margin <= 0 : margin < level.required;
    const judged =
      level.against.what === 'logic threshold'
        ? `its ${level.state} level on the ${fails ? 'wrong' : 'right'} side of its logic threshold ${level.against.volts.toFixed(3)} V`
        : `${margin.toFixed(3)} V from ${level.against.what} ${level.against.volts.toFixed(3)} V (as the witness gives it), ${level.required.toFixed(2)} V required`;
    return { op, reproduced: Math.abs(volts - level.volts) <= 1e-3 && fails, seen: `${level.net} at ${volts.toFixed(3)} V (the witness says ${level.volts.toFixed(3)} V): ${judged}`, unknown: at.unknown };
  }
  const grid = witness.grid;
  if (grid) {
    const t = op.tubes.find((x) => x.name === grid.section);
    if (!t || !op.converged) return { op, reproduced: false, seen: `${grid.section} did not solve`, unknown: at.unknown };
    return { op, reproduced: Math.abs(t.vgk - grid.vgk) <= 1e-3 && t.vgk > grid.cutoff, seen: `${grid.section}'s grid at ${t.vgk.toFixed(3)} V against its cathode (the witness says ${grid.vgk.toFixed(3)} V), cutoff at ${grid.cutoff.toFixed(3)} V`, unknown: at.unknown };
  }
  const gain = witness.gain;
  if (gain) {
    const g = gainCurveAt(design, { ...witness, gain });
    if (!g) return { op, reproduced: false, seen: `${gain.stage} did not solve with ${gain.net} held from ${gain.from.toFixed(3)} to ${gain.to.toFixed(3)} V`, unknown: at.unknown };
    const seen = `${gain.stage} with ${gain.net} held from ${gain.from.toFixed(3)} to ${gain.to.toFixed(3)} V falls at most ${g.steepest.toFixed(3)} V per volt (the witness says ${gain.steepest.toFixed(3)}): ${g.unity ? 'its gain reaches 1' : 'its gain never reaches 1'}`;
    return { op, reproduced: !g.unity, seen, unknown: at.unknown };
  }
  const latchNets = Object.keys(witness.states);
  if (latchNets.length === 2) {
    const [high, low] = witness.states[latchNets[0]!] === 'high' ? [latchNets[0]!, latchNets[1]!] : [latchNets[1]!, latchNets[0]!];
    const held = op.converged && stateHolds(design, op.nodes, high, low);
    return { op, reproduced: !held, seen: `${high} at ${op.nodes.get(high)?.toFixed(3)} V, ${low} at ${op.nodes.get(low)?.toFixed(3)} V: ${held ? 'the state holds' : 'the state does not hold'}`, unknown: at.unknown };
  }
  return { op, reproduced: false, seen: 'the witness names no level, grid or latch state to look at', unknown: at.unknown };
}
