import { designNets, type Design } from '../design/model.js';
import type { StageGraph } from '../graph/stageGraph.js';
import { logicThreshold, type StateHint } from '../solve/operatingPoint.js';
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
 * slope says the inside is worse (a divider's extreme can sit inside its band). Where one
 * enumeration per state cannot serve every net within the work allowed, each net gets its
 * own, over fewer parameters (those that move it most; at least `MIN_NET_PARAMETERS`).
 * The parameters left out of the enumeration add an allowance measured at the worst point
 * found: what moving each of them to its other end does to the level there, and to what
 * every other parameter could still add (their interaction, to first order in each). The
 * chain's bound is narrowed to that where it is tighter.
 */

/** Parameters enumerated over every corner, per state: 2^12 = 4,096 corners. */
export const TIGHT_PARAMETERS = 12;
/** Work (Newton iterations times unknowns) the enumeration may take in all. */
export const TIGHT_WORK = 1_200_000;
/** Where each net has an enumeration of its own: the fewest parameters it may enumerate; with fewer, the design is not narrowed. */
export const MIN_NET_PARAMETERS = 6;
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
  const perCorner = ITERATIONS_PER_CORNER * designNets(design).length;
  // One enumeration per state serves every net when it fits; otherwise each net gets its
  // own, over the parameters that move it most, as many as the work allows.
  const joint = states.length * 2 ** Math.min(TIGHT_PARAMETERS, toleranced) * perCorner <= TIGHT_WORK;
  const nets = [...chain.nets.values()].filter((c) => c.polarity === 'inverting' || c.polarity === 'follower').length;
  const free = joint ? TIGHT_PARAMETERS : Math.min(TIGHT_PARAMETERS, Math.floor(Math.log2(TIGHT_WORK / (states.length * nets * perCorner))));
  if (free < MIN_NET_PARAMETERS) return undefined;
  const refiner = new Refiner(design, graph, scenario, chain, new CornerBudget(0));
  const levels = new Map<string, { high?: { bound: number; seed: Seed }; low?: { bound: number; seed: Seed } }>();
  const refused = new Set<string>();
  let corners = 0;
  let searched = 0;
  for (const s of states) {
    const w = refiner.whole(s.moved);
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
    const r = searchState(w, s.hints, start, refiner.latchStates(w, s), judged, TIGHT_WORK * 2, free, joint);
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
 * One state of the whole design searched for its judged nets: the `free` parameters that
 * move the nets most (by their slopes at nominal, relative to each net's own total)
 * enumerated over every corner, once for every net (`joint`) or once per net over its own,
 * then each net's worst corner searched inwards. A net has no answer when the state was
 * lost at a corner or the work ran out.
 */
function searchState(
  w: WholeDesign,
  hints: StateHint[],
  start: Float64Array,
  latches: { high: number; low: number; threshold: number }[],
  judged: { net: string; terminal: number; high: boolean }[],
  cap: number,
  free: number,
  joint: boolean,
): { found: Map<string, LevelFound>; corners: number } {
  const problem = w.problem;
  const bands = w.parameters;
  const found = new Map<string, LevelFound>();
  const iterations = problem.system.iterationCount;
  const work = () => (problem.system.iterationCount - iterations) * problem.circuit.n;
  const inState = () => latches.every((l) => latchHeld(problem.volts(l.high), problem.volts(l.low), l.threshold));
  const solveAt = (values: Float64Array, from: Float64Array): boolean => problem.solveFrom(values, from) && inState();
  // A corner Newton misses from its neighbours is solved afresh, as `solve` would, before the state counts as lost there.
  const rescue = (values: Float64Array): boolean => {
    const x = w.state(hints, values);
    return x !== undefined && solveAt(values, x);
  };
  // Far from its neighbours (the polish's golden-section probes, the allowance's moves to a band's other end), a point is rescued too.
  const solveSure = (values: Float64Array, from: Float64Array): boolean => solveAt(values, from) || rescue(values);
  if (judged.length === 0 || !solveAt(w.nominal, start)) return { found, corners: 0 };
  const nominal = Float64Array.from(problem.solution);
  // Each net's slopes at nominal, as effects across the bands, worse-ward positive.
  const effects = judged.map((j) => {
    const s = problem.slopesAt(j.terminal);
    return Float64Array.from(bands, (b, i) => (s ? (j.high ? -1 : 1) * s[i]! * (b.high - b.low) : 0));
  });
  const varied = bands.map((b, i) => i).filter((i) => bands[i]!.high > bands[i]!.low);
  const groups = joint ? [judged.map((_, k) => k)] : judged.map((_, k) => [k]);
  let corners = 0;
  for (const group of groups) {
    const importance = bands.map((_, i) => Math.max(0, ...group.map((k) => Math.abs(effects[k]![i]!) / (effects[k]!.reduce((a, x) => a + Math.abs(x), 0) || 1))));
    const order = [...varied].sort((a, b) => importance[b]! - importance[a]!);
    const enumerated = order.slice(0, free);
    const rest = order.slice(free);
    // The parameters left out sit where the net that cares most about them has its worst.
    const values = Float64Array.from(w.nominal);
    for (const i of rest) {
      const e = group.map((k) => effects[k]!).reduce((best, x) => (Math.abs(x[i]!) > Math.abs(best[i]!) ? x : best));
      values[i] = e[i]! >= 0 ? bands[i]!.high : bands[i]!.low;
    }
    for (const i of enumerated) values[i] = bands[i]!.low;
    const worst = group.map(() => ({ value: NaN, at: values }));
    const walk = walkCorners(problem, values, enumerated, bands, nominal, solveAt, () => work() > cap, () => {
      group.forEach((k, g) => {
        const j = judged[k]!;
        const v = problem.volts(j.terminal);
        const was = worst[g]!.value;
        if (Number.isNaN(was) || (j.high ? v < was : v > was)) worst[g] = { value: v, at: Float64Array.from(values) };
      });
    }, rescue);
    corners += walk.solved;
    if (walk.lost) return { found: new Map(), corners };
    if (!walk.complete) continue;
    group.forEach((k, g) => {
      const j = judged[k]!;
      const sign = j.high ? -1 : 1;
      const p = polish(problem, bands, worst[g]!.at, nominal, j.terminal, sign, solveSure);
      if (!p) return;
      const allowance = restAllowance(problem, bands, varied, rest, p, j.terminal, sign, solveSure);
      if (allowance === undefined) return;
      const effect = (i: number) => Math.abs(p.slopes[i]! * (bands[i]!.high - bands[i]!.low));
      const ranked = [...varied].sort((a, b) => effect(b) - effect(a));
      found.set(j.net, { found: p.value, bound: j.high ? p.value - allowance : p.value + allowance, at: p.values, ranked, exact: rest.length === 0 });
    });
  }
  return { found, corners };
}

/**
 * What the parameters left out of the enumeration (`rest`) could still add to a level
 * beyond the worst point `p` found (volts, worse-ward), by a bilinear model of the level
 * measured at `p`: each left-out parameter is moved to its band's other end in turn, and
 * what that move does to the level itself (usually better: `p` sits at the end its slope
 * says is worse) plus what it gives every other parameter to gain (the worse-ward effect
 * of moving that one from where it sits, after the move less before) is its share, where
 * positive. Summed over the left-out parameters this covers every combination of them
 * under the model, each interaction counted from both sides. Undefined when a move does
 * not solve.
 */
function restAllowance(
  problem: WholeDesign['problem'],
  bands: readonly { low: number; high: number }[],
  varied: readonly number[],
  rest: readonly number[],
  p: { value: number; values: Float64Array; slopes: Float64Array },
  terminal: number,
  sign: number,
  solveAt: (values: Float64Array, from: Float64Array) => boolean,
): number | undefined {
  if (rest.length === 0) return 0;
  if (!solveAt(p.values, Float64Array.from(problem.solution))) return undefined;
  const at = Float64Array.from(problem.solution);
  const values = Float64Array.from(p.values);
  // How much worse the level gets by moving parameter k from where it sits to the end its slope says is worse.
  const gain = (slopes: Float64Array, k: number) => {
    const b = bands[k]!;
    const d = sign * slopes[k]!;
    return Math.max(0, d * (b.high - values[k]!), -d * (values[k]! - b.low));
  };
  const before = Float64Array.from(varied, (k) => gain(p.slopes, k));
  let allowance = 0;
  for (const i of rest) {
    const b = bands[i]!;
    const was = values[i]!;
    values[i] = was - b.low > b.high - was ? b.low : b.high;
    const slopes = solveAt(values, at) ? problem.slopesAt(terminal) : undefined;
    if (!slopes) return undefined;
    let share = sign * problem.volts(terminal) - sign * p.value;
    values[i] = was;
    varied.forEach((k, n) => {
      if (k !== i) share += Math.max(0, gain(slopes, k) - before[n]!);
    });
    allowance += Math.max(0, share);
  }
  return allowance;
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
