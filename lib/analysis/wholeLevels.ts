import { designNets, type Design } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { logicThreshold } from '../solve/operatingPoint.js';
import type { AgeingScenario } from './ageing.js';
import { CornerBudget, ITERATIONS_PER_CORNER, latchHeld, walkCorners, type WholeDesign } from './cornerSearch.js';
import type { LevelChain } from './levelChain.js';
import { designParameters } from './parameters.js';
import { everyState, Refiner, stateLogic, type Seed } from './refineNets.js';

/**
 * Correlated levels for designs small enough to solve whole. The chain solves each net's
 * region with the nets around it held anywhere in their intervals and every rail and part
 * at the corner worst for that region alone, so a rail high in one region and low in the
 * next, or a divider that loads one plate and drives the next grid, is counted twice over;
 * around a latch near its edge the errors add up to a collapse. Here the whole design is
 * solved in every state of its contacts and latches, every rail and part taking one value
 * in each corner: the parameters that move the levels most are enumerated over every
 * corner, then each level's worst corner is searched inwards along every parameter whose
 * slope says the inside is worse (a divider's extreme can sit inside its band), and the
 * parameters left out of the enumeration add their whole linearised effect as an
 * allowance. The chain's bound is narrowed to that where it is tighter.
 */

/** Parameters enumerated over every corner, per state: 2^12 = 4,096 corners. */
export const TIGHT_PARAMETERS = 12;
/** Work (Newton iterations times unknowns) the enumeration may take in all. */
export const TIGHT_WORK = 1_200_000;
/** A slope moving a level by less than this across its band (volts) is not searched along. */
const POLISH_VOLTS = 1e-4;
/** Moves of the inward search at most, per level. */
const POLISH_MOVES = 24;
/** Golden-section steps of a line search: the band shrinks to 0.618^14 ≈ 0.1 % of its width. */
const GOLDEN_STEPS = 14;

/** What the whole design gives for one level of one net in one state. */
interface LevelFound {
  /** The worst level, with the allowance for the parameters not enumerated. */
  bound: number;
  /** The worst level found at a point of the box (a corner, or inside it along a band), and that point. */
  found: number;
  at: Float64Array;
  /** The parameters by their effect on the level there, most first. */
  ranked: number[];
  /** Every toleranced parameter was enumerated: no allowance. */
  exact: boolean;
}

/** What narrowing found: how many levels, over how many states and corners. */
export interface TightenSummary {
  states: number;
  corners: number;
  narrowed: number;
}

/**
 * Narrows the chain's worst levels with those of the whole design (see the file's
 * comment). A level is narrowed only when every state in which its net takes it was
 * searched whole, and in none of them was a latch lost or the net's logic unknown. Undefined when the design is too large or has too many states.
 */
export function tightenLevels(design: Design, graph: StageGraph, scenario: AgeingScenario, chain: LevelChain): (TightenSummary & { seeds: Map<string, { high?: Seed; low?: Seed }> }) | undefined {
  const states = everyState(design, graph);
  if (!states || !chain.settled) return undefined;
  const toleranced = designParameters(design).filter((p) => p.high > p.low).length;
  const planned = states.length * 2 ** Math.min(TIGHT_PARAMETERS, toleranced) * ITERATIONS_PER_CORNER * designNets(design).length;
  if (planned > TIGHT_WORK) return undefined;
  const refiner = new Refiner(design, graph, scenario, chain, new CornerBudget(0));
  const levels = new Map<string, { high?: { bound: number; seed: Seed }; low?: { bound: number; seed: Seed } }>();
  const refused = new Set<string>();
  let corners = 0;
  let searched = 0;
  for (const s of states) {
    const w = refiner.whole(s.close);
    const start = refiner.start(s);
    if (!start) continue;
    searched++;
    const at = (net: string) => {
      const t = w.problem.circuit.terminalOf.get(net);
      return t === undefined ? undefined : t >= 0 ? start[t]! : w.problem.circuit.fixedVolts[-1 - t]!;
    };
    const logic = stateLogic(chain, s, at);
    const judged: { net: string; terminal: number; high: boolean }[] = [];
    for (const [net, c] of chain.nets) {
      if (c.polarity !== 'inverting' && c.polarity !== 'follower') continue;
      const t = w.problem.circuit.terminalOf.get(net);
      const high = logic.get(net);
      if (t === undefined || t < 0) continue;
      // A level is the net's in the states its logic gives it, whatever it reads there (a failing net reads wrong).
      if (high === undefined) {
        refused.add(net);
        continue;
      }
      judged.push({ net, terminal: t, high });
    }
    const r = searchState(w, start, refiner.latchStates(w, s), judged, TIGHT_WORK * 2);
    corners += r.corners;
    for (const j of judged) {
      const level = j.high ? 'high' : 'low';
      const f = r.found.get(j.net);
      const entry = levels.get(j.net) ?? levels.set(j.net, {}).get(j.net)!;
      if (!f) {
        refused.add(j.net);
        continue;
      }
      const worse = (a: number, b: number) => (j.high ? a < b : a > b);
      const was = entry[level];
      const seed: Seed = { found: { value: f.found, values: f.at, ranked: f.ranked, state: s, w, start }, exact: f.exact && (was?.seed.exact ?? true), corners: r.corners + (was?.seed.corners ?? 0) };
      if (was && !worse(f.found, was.seed.found.value)) seed.found = was.seed.found;
      entry[level] = { bound: was && !worse(f.bound, was.bound) ? was.bound : f.bound, seed };
    }
  }
  let narrowed = 0;
  const seeds = new Map<string, { high?: Seed; low?: Seed }>();
  for (const [net, found] of levels) {
    if (refused.has(net)) continue;
    const l = chain.levels.get(net)!;
    seeds.set(net, { ...(found.high && { high: found.high.seed }), ...(found.low && { low: found.low.seed }) });
    if (found.high && l.canHigh && found.high.bound > l.highWorst) narrowed += chain.narrow(net, 'high', found.high.bound);
    if (found.low && l.canLow && found.low.bound < l.lowWorst) narrowed += chain.narrow(net, 'low', found.low.bound);
  }
  chain.regroup();
  return { states: searched, corners, narrowed, seeds };
}

/**
 * One state of the whole design searched for every judged net at once: the parameters
 * that move the nets most (each net's slopes at nominal, relative to the net's own total)
 * enumerated over every corner, then each net's worst corner searched inwards. A net has
 * no answer when the state was lost at a corner or the work ran out.
 */
function searchState(
  w: WholeDesign,
  start: Float64Array,
  latches: { high: number; low: number; threshold: number }[],
  judged: { net: string; terminal: number; high: boolean }[],
  cap: number,
): { found: Map<string, LevelFound>; corners: number } {
  const problem = w.problem;
  const bands = w.parameters;
  const found = new Map<string, LevelFound>();
  const iterations = problem.system.iterationCount;
  const work = () => (problem.system.iterationCount - iterations) * problem.circuit.n;
  const inState = () => latches.every((l) => latchHeld(problem.volts(l.high), problem.volts(l.low), l.threshold));
  const solveAt = (values: Float64Array, from: Float64Array): boolean => problem.solveFrom(values, from) && inState();
  if (judged.length === 0 || !solveAt(w.nominal, start)) return { found, corners: 0 };
  const nominal = Float64Array.from(problem.solution);
  // Each net's slopes at nominal, as effects across the bands, worse-ward positive.
  const effects = judged.map((j) => {
    const s = problem.slopesAt(j.terminal);
    return Float64Array.from(bands, (b, i) => (s ? (j.high ? -1 : 1) * s[i]! * (b.high - b.low) : 0));
  });
  const importance = bands.map((_, i) => Math.max(0, ...effects.map((e) => Math.abs(e[i]!) / (e.reduce((a, x) => a + Math.abs(x), 0) || 1))));
  const varied = bands.map((b, i) => i).filter((i) => bands[i]!.high > bands[i]!.low);
  varied.sort((a, b) => importance[b]! - importance[a]!);
  const free = varied.slice(0, TIGHT_PARAMETERS);
  const rest = varied.slice(TIGHT_PARAMETERS);
  // The parameters left out sit where the net that cares most about them has its worst.
  const values = Float64Array.from(w.nominal);
  for (const i of rest) {
    const e = effects.reduce((best, x) => (Math.abs(x[i]!) > Math.abs(best[i]!) ? x : best));
    values[i] = e[i]! >= 0 ? bands[i]!.high : bands[i]!.low;
  }
  for (const i of free) values[i] = bands[i]!.low;
  const worst = judged.map(() => ({ value: NaN, at: values }));
  const walk = walkCorners(problem, values, free, bands, nominal, solveAt, () => work() > cap, () => {
    judged.forEach((j, k) => {
      const v = problem.volts(j.terminal);
      const was = worst[k]!.value;
      if (Number.isNaN(was) || (j.high ? v < was : v > was)) worst[k] = { value: v, at: Float64Array.from(values) };
    });
  });
  if (walk.lost || !walk.complete) return { found, corners: walk.solved };
  judged.forEach((j, k) => {
    const p = polish(problem, bands, worst[k]!.at, nominal, j.terminal, j.high ? -1 : 1, solveAt);
    if (!p) return;
    // The parameters not enumerated may sit at the wrong end for this net: their whole linearised effect is allowed for.
    const effect = (i: number) => Math.abs(p.slopes[i]! * (bands[i]!.high - bands[i]!.low));
    const allowance = rest.reduce((a, i) => a + effect(i), 0);
    const ranked = [...varied].sort((a, b) => effect(b) - effect(a));
    found.set(j.net, { found: p.value, bound: j.high ? p.value - allowance : p.value + allowance, at: p.values, ranked, exact: rest.length === 0 });
  });
  return { found, corners: walk.solved };
}

/**
 * From a corner, the worst point of the box a coordinate search reaches: each parameter
 * whose slope says that moving it away from where it sits makes the level worse is
 * searched along its band (golden section, its two ends included), the largest effect
 * first, until no move helps. Undefined when the start does not solve.
 */
function polish(
  problem: WholeDesign['problem'],
  bands: readonly { low: number; high: number }[],
  corner: Float64Array,
  start: Float64Array,
  terminal: number,
  sign: number,
  solveAt: (values: Float64Array, from: Float64Array) => boolean,
): { value: number; values: Float64Array; slopes: Float64Array } | undefined {
  const values = Float64Array.from(corner);
  if (!solveAt(values, start)) return undefined;
  let from = Float64Array.from(problem.solution);
  let best = sign * problem.volts(terminal);
  let slopes = problem.slopesAt(terminal);
  const tried = new Set<number>();
  for (let move = 0; slopes && move < POLISH_MOVES; move++) {
    const s = slopes;
    const candidates = bands
      .map((b, i) => ({ i, d: sign * s[i]!, width: b.high - b.low }))
      .filter(({ i, d, width }) => width > 0 && !tried.has(i) && Math.abs(d * width) >= POLISH_VOLTS && !(d > 0 ? values[i]! >= bands[i]!.high : values[i]! <= bands[i]!.low))
      .sort((a, b) => Math.abs(b.d * b.width) - Math.abs(a.d * a.width));
    const c = candidates[0];
    if (!c) break;
    tried.add(c.i);
    const b = bands[c.i]!;
    const was = values[c.i]!;
    const f = (x: number) => {
      values[c.i] = x;
      return solveAt(values, from) ? sign * problem.volts(terminal) : -Infinity;
    };
    let [lo, hi] = [b.low, b.high];
    let bestX = was;
    let bestF = best;
    const consider = (x: number) => {
      const v = f(x);
      if (v > bestF) [bestX, bestF] = [x, v];
      return v;
    };
    consider(lo);
    consider(hi);
    const g = (Math.sqrt(5) - 1) / 2;
    let x1 = hi - g * (hi - lo);
    let x2 = lo + g * (hi - lo);
    let f1 = consider(x1);
    let f2 = consider(x2);
    for (let k = 0; k < GOLDEN_STEPS; k++) {
      if (f1 >= f2) {
        [hi, x2, f2] = [x2, x1, f1];
        x1 = hi - g * (hi - lo);
        f1 = consider(x1);
      } else {
        [lo, x1, f1] = [x1, x2, f2];
        x2 = lo + g * (hi - lo);
        f2 = consider(x2);
      }
    }
    values[c.i] = bestX;
    if (!solveAt(values, from)) {
      values[c.i] = was;
      solveAt(values, from);
      continue;
    }
    from = Float64Array.from(problem.solution);
    if (bestF > best + 1e-9) {
      best = sign * problem.volts(terminal);
      // A move changes every other slope: each parameter may be searched again.
      tried.clear();
      tried.add(c.i);
      slopes = problem.slopesAt(terminal);
    }
  }
  if (!slopes || !solveAt(values, from)) return undefined;
  return { value: sign * best, values, slopes: problem.slopesAt(terminal) ?? slopes };
}
